package broker

import (
	"context"
	"fmt"
	"net"
	"net/url"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// startCluster starts three embedded servers with JetStream routed into
// one cluster (three client ports and three route ports the system has
// free) and returns the comma-separated client URLs once JetStream has a meta
// leader.
func startCluster(t *testing.T) string {
	t.Helper()
	// Six ports the system has free now, held open together so that they
	// differ, then let go for the servers (fixed ports in the ephemeral
	// range had been taken by other processes' connections during a
	// full run).
	var ports []int
	var held []net.Listener
	for range 6 {
		ln, err := net.Listen("tcp", "127.0.0.1:0")
		if err != nil {
			t.Fatal(err)
		}
		held = append(held, ln)
		ports = append(ports, ln.Addr().(*net.TCPAddr).Port)
	}
	for _, ln := range held {
		ln.Close()
	}
	var routes []*url.URL
	for i := range 3 {
		routes = append(routes, &url.URL{Scheme: "nats", Host: fmt.Sprintf("127.0.0.1:%d", ports[3+i])})
	}
	var urls []string
	var servers []*server.Server
	for i := range 3 {
		opts := &server.Options{
			ServerName: fmt.Sprintf("n%d", i+1), Host: "127.0.0.1", Port: ports[i],
			JetStream: true, StoreDir: t.TempDir(), NoSigs: true,
			JetStreamMaxMemory: 64 << 20, JetStreamMaxStore: 256 << 20,
			Cluster: server.ClusterOpts{Name: "uc-test", Host: "127.0.0.1", Port: ports[3+i]},
			Routes:  routes,
		}
		ns, err := server.NewServer(opts)
		if err != nil {
			t.Fatal(err)
		}
		go ns.Start()
		servers = append(servers, ns)
		urls = append(urls, fmt.Sprintf("nats://127.0.0.1:%d", ports[i]))
	}
	t.Cleanup(func() {
		for _, ns := range servers {
			ns.Shutdown()
			ns.WaitForShutdown()
		}
	})
	deadline := time.Now().Add(30 * time.Second)
	for _, ns := range servers {
		for !ns.ReadyForConnections(100*time.Millisecond) || !ns.JetStreamIsClustered() || !ns.JetStreamIsCurrent() {
			if time.Now().After(deadline) {
				t.Fatal("cluster not formed in 30 s")
			}
			time.Sleep(50 * time.Millisecond)
		}
	}
	for !servers[0].JetStreamIsLeader() && !servers[1].JetStreamIsLeader() && !servers[2].JetStreamIsLeader() {
		if time.Now().After(deadline) {
			t.Fatal("no JetStream meta leader in 30 s")
		}
		time.Sleep(50 * time.Millisecond)
	}
	return strings.Join(urls, ",")
}

func clusterJS(t *testing.T, urls string) jetstream.JetStream {
	t.Helper()
	nc, err := nats.Connect(urls)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	js, err := jetstream.New(nc)
	if err != nil {
		t.Fatal(err)
	}
	return js
}

// Setup with fewer replicas than the cluster's streams and buckets hold
// keeps the higher count and says so, instead of cutting a cluster's
// three copies of every stream down to one (the README's "Scaling out":
// replicas = 3 on a three-node cluster; simulated truth: the counts the
// first Setup asked for).
func TestSetupNeverLowersReplicas(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a three-node cluster")
	}
	urls := startCluster(t)
	js := clusterJS(t, urls)
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	set := StreamSettings{Replicas: 3, DeadLetterMaxBytes: 8 << 20, DataMaxBytes: 32 << 20}
	if _, err := Setup(ctx, js, set); err != nil {
		t.Fatal(err)
	}
	set.Replicas = 1
	st, err := Setup(ctx, js, set)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{StreamData, StreamEstimates, StreamAlarms, StreamDeadLetter, "KV_" + BucketLatest, "KV_" + BucketState, "KV_" + BucketLease, "KV_" + BucketWorkers} {
		s, err := js.Stream(ctx, name)
		if err != nil {
			t.Fatal(err)
		}
		if r := s.CachedInfo().Config.Replicas; r != 3 {
			t.Errorf("%s: %d replicas after a Setup asking for 1, want the 3 it had", name, r)
		}
	}
	if len(st.KeptReplicas) != 8 {
		t.Errorf("Setup noted %d streams kept at more replicas, want 8: %v", len(st.KeptReplicas), st.KeptReplicas)
	}
	for _, k := range st.KeptReplicas {
		if msg := k.String(); !strings.Contains(msg, "3 replicas") || !strings.Contains(msg, "asks for 1") {
			t.Errorf("note %q does not name both counts", msg)
		}
	}
}

// Two processes setting up the streams at once on a fresh cluster both
// succeed (the README's "Scaling out" starts several serve processes
// together; before, one clustered create could go unanswered and use up
// the whole start-up time).
func TestSetupTogetherOnFreshCluster(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a three-node cluster")
	}
	urls := startCluster(t)
	jss := []jetstream.JetStream{clusterJS(t, urls), clusterJS(t, urls), clusterJS(t, urls)}
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	var wg sync.WaitGroup
	errs := make([]error, len(jss))
	for i, js := range jss {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, errs[i] = Setup(ctx, js, StreamSettings{Replicas: 3, DataMaxBytes: 32 << 20, DeadLetterDefault: 8 << 20, DeadLetterMin: 4 << 20})
		}()
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Errorf("Setup %d of %d started together: %v", i+1, len(jss), err)
		}
	}
}
