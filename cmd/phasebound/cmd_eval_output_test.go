package main

import (
	"context"
	"net"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// failingService answers the first okCalls Evaluate calls with P = T
// (invented stand-in values) and refuses every later one, so a batch fails
// after some of its rows were written.
type failingService struct {
	pb.UnimplementedBoundaryServiceServer
	okCalls int64
	calls   atomic.Int64
}

func (s *failingService) Evaluate(_ context.Context, r *pb.EvaluateRequest) (*pb.EvaluateResponse, error) {
	if s.calls.Add(1) > s.okCalls {
		return nil, status.Error(codes.InvalidArgument, "refused by the test server")
	}
	n := len(r.GetValues())
	resp := &pb.EvaluateResponse{
		TemperatureK: r.GetValues(),
		PressurePa:   r.GetValues(),
		DpdtPaPerK:   make([]float64, n),
		BranchNames:  []string{"only"},
		BranchIndex:  make([]uint32, n),
		Status:       make([]pb.PointStatus, n),
	}
	for i := range resp.Status {
		resp.Status[i] = pb.PointStatus_POINT_STATUS_OK
	}
	return resp, nil
}

// startFailingServer serves svc on a loopback port.
func startFailingServer(t *testing.T, svc *failingService) string {
	t.Helper()
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	g := grpc.NewServer()
	pb.RegisterBoundaryServiceServer(g, svc)
	go g.Serve(lis)
	t.Cleanup(g.Stop)
	return lis.Addr().String()
}

// TestEvalBatchOutputAtomic: a batch that fails after its first chunk was
// written leaves neither a partial OUT.csv nor a temporary file, and an
// earlier OUT.csv keeps its contents; a batch that succeeds replaces it.
func TestEvalBatchOutputAtomic(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in.csv")
	if err := os.WriteFile(in, []byte("temperature_k\n300\n310\n320\n330\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out.csv")
	batch := func(addr string) (int, string) {
		code, _, errOut := runCmd(t, "--server", addr, "eval", "--substance", "water", "--curve", "saturation",
			"--input", in, "--output", out, "--chunk", "2")
		return code, errOut
	}
	// onlyOutputs fails the test unless the folder holds exactly want
	// besides the input.
	onlyOutputs := func(want ...string) {
		t.Helper()
		entries, err := os.ReadDir(dir)
		if err != nil {
			t.Fatal(err)
		}
		var got []string
		for _, e := range entries {
			if e.Name() != "in.csv" {
				got = append(got, e.Name())
			}
		}
		if strings.Join(got, ",") != strings.Join(want, ",") {
			t.Errorf("folder holds %v besides the input, want %v", got, want)
		}
	}

	// Fails on the second chunk: no output at all.
	code, errOut := batch(startFailingServer(t, &failingService{okCalls: 1}))
	if code == 0 || !strings.Contains(errOut, "refused by the test server") {
		t.Fatalf("failing batch: exit %d, stderr %q; want the server's error", code, errOut)
	}
	onlyOutputs()

	// Succeeds: OUT.csv holds the header and all four rows.
	if code, errOut := batch(startFailingServer(t, &failingService{okCalls: 2})); code != 0 {
		t.Fatalf("good batch: exit %d: %s", code, errOut)
	}
	onlyOutputs("out.csv")
	good, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if lines := strings.Split(strings.TrimSpace(string(good)), "\n"); len(lines) != 5 || !strings.HasPrefix(lines[4], "330,330,") {
		t.Fatalf("good batch wrote %q, want a header and 4 rows ending with T = 330", good)
	}
	if fi, err := os.Stat(out); err != nil {
		t.Error(err)
	} else if fi.Mode().Perm() != 0o644 {
		t.Errorf("output mode %v, want 0644", fi.Mode())
	}

	// Fails again: the earlier output is untouched.
	if code, _ := batch(startFailingServer(t, &failingService{okCalls: 1})); code == 0 {
		t.Fatal("second failing batch succeeded")
	}
	onlyOutputs("out.csv")
	if after, err := os.ReadFile(out); err != nil || string(after) != string(good) {
		t.Errorf("a failed batch changed the earlier output: %q (%v), want %q", after, err, good)
	}
}
