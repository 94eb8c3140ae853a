// Command loopback-ports prints N free TCP ports on 127.0.0.1, one a line.
//
// All N listeners are held open together so the ports are distinct; they are released just
// before exit, so a caller should bind them soon after.
package main

import (
	"flag"
	"fmt"
	"log"
	"net"
)

func main() {
	n := flag.Int("n", 1, "how many ports")
	flag.Parse()
	listeners := make([]net.Listener, 0, *n)
	for range *n {
		l, err := net.Listen("tcp", "127.0.0.1:0")
		if err != nil {
			log.Fatalf("loopback-ports: %v", err)
		}
		listeners = append(listeners, l)
	}
	for _, l := range listeners {
		fmt.Println(l.Addr().(*net.TCPAddr).Port)
	}
	for _, l := range listeners {
		l.Close()
	}
}
