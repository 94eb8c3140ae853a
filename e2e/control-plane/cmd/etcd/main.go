// Command etcd runs a single-member etcd on 127.0.0.1 for the test control plane.
//
// It embeds the etcd server library instead of using upstream's etcd binary so that the whole
// control plane builds from Go modules with one `go build`.
package main

import (
	"flag"
	"fmt"
	"log"
	"net/url"
	"os"
	"os/signal"
	"syscall"
	"time"

	"go.etcd.io/etcd/server/v3/embed"
)

func main() {
	dataDir := flag.String("data-dir", "", "folder for etcd's data (required)")
	clientPort := flag.Int("client-port", 0, "loopback port for clients such as kube-apiserver (required)")
	peerPort := flag.Int("peer-port", 0, "loopback port for the peer listener etcd always opens (required)")
	noFsync := flag.Bool("unsafe-no-fsync", false, "skip fsync; for throwaway test data only")
	flag.Parse()
	if *dataDir == "" || *clientPort == 0 || *peerPort == 0 {
		log.Fatal("etcd: --data-dir, --client-port and --peer-port are required")
	}

	clientURL := loopbackURL(*clientPort)
	peerURL := loopbackURL(*peerPort)
	cfg := embed.NewConfig()
	cfg.Name = "heapherd"
	cfg.Dir = *dataDir
	cfg.ListenClientUrls = []url.URL{clientURL}
	cfg.AdvertiseClientUrls = []url.URL{clientURL}
	cfg.ListenPeerUrls = []url.URL{peerURL}
	cfg.AdvertisePeerUrls = []url.URL{peerURL}
	cfg.InitialCluster = cfg.InitialClusterFromName(cfg.Name)
	cfg.UnsafeNoFsync = *noFsync

	e, err := embed.StartEtcd(cfg)
	if err != nil {
		log.Fatalf("etcd: start: %v", err)
	}
	select {
	case <-e.Server.ReadyNotify():
	case err := <-e.Err():
		log.Fatalf("etcd: %v", err)
	case <-time.After(60 * time.Second):
		e.Close()
		log.Fatal("etcd: not ready within 60 s")
	}
	fmt.Fprintf(os.Stderr, "etcd ready on %s\n", clientURL.String())

	// Close on TERM/INT so the data folder is left consistent when stop.sh ends us.
	stop := make(chan os.Signal, 1)
	signal.Notify(stop, syscall.SIGTERM, syscall.SIGINT)
	select {
	case sig := <-stop:
		fmt.Fprintf(os.Stderr, "etcd: %v, shutting down\n", sig)
		e.Close()
	case err := <-e.Err():
		e.Close()
		log.Fatalf("etcd: %v", err)
	}
}

func loopbackURL(port int) url.URL {
	return url.URL{Scheme: "http", Host: fmt.Sprintf("127.0.0.1:%d", port)}
}
