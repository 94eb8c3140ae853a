// Command etcd is upstream's etcd server command, built from go.etcd.io/etcd/server/v3 so the
// control plane needs no downloaded etcd binary. It takes etcd's usual flags.
package main

import (
	"os"

	"go.etcd.io/etcd/server/v3/etcdmain"
)

func main() {
	etcdmain.Main(os.Args)
}
