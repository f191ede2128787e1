package bench

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// MaxSoak bounds a soak run.
const MaxSoak = time.Hour

// SoakConfig configures Soak. Zero fields mean the documented defaults.
type SoakConfig struct {
	// Client reaches the server being soaked.
	Client phaseboundpb.BoundaryServiceClient
	// Duration of the soak; required, at most MaxSoak.
	Duration time.Duration
	// Callers is the number of concurrent callers; 0 means DefaultCallers.
	Callers int
	// Batch is the number of points of the batch calls; 0 means 1000.
	Batch int
	// InProcess says the server runs in this process, so the memory and
	// goroutine figures include it (otherwise they are the client's).
	InProcess bool
}

// ProcessSample is a process's memory and goroutines at one moment.
type ProcessSample struct {
	RSSBytes    int64  `json:"rss_bytes"`
	HeapBytes   uint64 `json:"heap_alloc_bytes"`
	HeapObjects uint64 `json:"heap_objects"`
	Goroutines  int    `json:"goroutines"`
	SysBytes    uint64 `json:"sys_bytes"`
	NumGC       uint32 `json:"num_gc"`
}

// SoakReport is the outcome of Soak.
type SoakReport struct {
	Seconds float64 `json:"soak_seconds"`
	Callers int     `json:"callers"`
	// Calls by kind, and failed calls (any gRPC error) by kind.
	Calls        int64            `json:"calls"`
	Errors       int64            `json:"errors"`
	CallsByKind  map[string]int64 `json:"calls_by_kind"`
	ErrorsByKind map[string]int64 `json:"errors_by_kind"`
	// Points evaluated, and points whose status was not the expected one.
	Points          int64   `json:"points"`
	PointMismatches int64   `json:"point_mismatches"`
	CallsPerSecond  float64 `json:"calls_per_second"`
	// Scope says whose process the samples describe.
	Scope        string        `json:"scope"`
	Start        ProcessSample `json:"start"`
	End          ProcessSample `json:"end"`
	PeakRSSBytes int64         `json:"peak_rss_bytes"`
	FirstError   string        `json:"first_error,omitempty"`
}

// Soak calls the server from concurrent callers for the configured
// duration: batches on the table path (pressure and latent heat), single
// points, small exact batches through the plugin, batches with a bad point
// among good ones (which must come back as per-point statuses, not call
// errors) and echoes. It samples memory and goroutines at the start and
// at the end (each after a garbage collection).
func Soak(ctx context.Context, cfg SoakConfig) (*SoakReport, error) {
	if cfg.Client == nil {
		return nil, errors.New("bench: SoakConfig needs a Client")
	}
	if cfg.Duration <= 0 || cfg.Duration > MaxSoak {
		return nil, fmt.Errorf("bench: soak duration %v outside (0, %v]", cfg.Duration, MaxSoak)
	}
	if cfg.Callers <= 0 {
		cfg.Callers = DefaultCallers
	}
	if cfg.Batch <= 0 {
		cfg.Batch = 1000
	}
	rep := &SoakReport{Callers: cfg.Callers, CallsByKind: map[string]int64{}, ErrorsByKind: map[string]int64{}, Scope: "client process only (the server is remote)"}
	if cfg.InProcess {
		rep.Scope = "this process: client and in-process server (backend plugins are separate processes)"
	}
	kinds := []string{"batch", "latent_batch", "single", "exact_batch", "bad_point_batch", "echo"}
	calls := make([]atomic.Int64, len(kinds))
	errs := make([]atomic.Int64, len(kinds))
	var points, mismatches atomic.Int64
	var firstErr atomic.Pointer[string]
	// One call first, so that the connection's own goroutines and buffers
	// exist before the start sample.
	if _, err := cfg.Client.Echo(ctx, &phaseboundpb.EchoRequest{Values: []float64{1}}); err != nil {
		return nil, fmt.Errorf("bench: soak warm-up call: %w", err)
	}
	rep.Start = sample()
	peak := rep.Start.RSSBytes
	var peakMu sync.Mutex
	stop := time.Now().Add(cfg.Duration)
	t0 := time.Now()
	var wg sync.WaitGroup
	for c := range cfg.Callers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			rng := rand.New(rand.NewPCG(uint64(c), 0x50a6))
			xs := make([]float64, cfg.Batch)
			for i := 0; time.Now().Before(stop) && ctx.Err() == nil; i++ {
				k := i % len(kinds)
				for j := range xs {
					xs[j] = 274 + 370*rng.Float64()
				}
				req := &phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
					Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: xs}
				wantBad := 0
				var err error
				var resp *phaseboundpb.EvaluateResponse
				switch kinds[k] {
				case "latent_batch":
					req.IncludeLatentHeat = true
				case "single":
					req.Values = xs[:1]
				case "exact_batch":
					req.Exact, req.Values = true, xs[:min(10, len(xs))]
				case "bad_point_batch":
					xs[len(xs)/2] = 1e4 // far above the critical point
					wantBad = 1
				case "echo":
					_, err = cfg.Client.Echo(ctx, &phaseboundpb.EchoRequest{Values: xs, Copies: 3})
				}
				if kinds[k] != "echo" {
					resp, err = cfg.Client.Evaluate(ctx, req)
				}
				calls[k].Add(1)
				if err != nil {
					if ctx.Err() != nil {
						return
					}
					errs[k].Add(1)
					msg := kinds[k] + ": " + err.Error()
					firstErr.CompareAndSwap(nil, &msg)
					continue
				}
				if resp != nil {
					points.Add(int64(len(req.Values)))
					// A batch with no failure may come back compact
					// (no statuses); one with a failure has a status
					// per point.
					n, ns := len(req.Values), len(resp.GetStatus())
					if len(resp.GetErrors()) != wantBad || len(resp.GetPressurePa()) != n || (ns != n && (ns != 0 || wantBad != 0)) {
						mismatches.Add(1)
					}
				}
				if c == 0 && i%64 == 0 {
					if rss := rssBytes(); rss > 0 {
						peakMu.Lock()
						peak = max(peak, rss)
						peakMu.Unlock()
					}
				}
			}
		}()
	}
	wg.Wait()
	rep.Seconds = time.Since(t0).Seconds()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	rep.End = sample()
	rep.PeakRSSBytes = max(peak, rep.End.RSSBytes)
	for k, name := range kinds {
		rep.CallsByKind[name] = calls[k].Load()
		rep.ErrorsByKind[name] = errs[k].Load()
		rep.Calls += calls[k].Load()
		rep.Errors += errs[k].Load()
	}
	rep.Points, rep.PointMismatches = points.Load(), mismatches.Load()
	rep.CallsPerSecond = float64(rep.Calls) / rep.Seconds
	if p := firstErr.Load(); p != nil {
		rep.FirstError = *p
	}
	return rep, nil
}

// sample collects garbage first (twice, so that sync.Pool caches such as
// gRPC's buffer pools are emptied too) so that heap figures compare.
func sample() ProcessSample {
	runtime.GC()
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	return ProcessSample{RSSBytes: rssBytes(), HeapBytes: ms.HeapAlloc, HeapObjects: ms.HeapObjects,
		Goroutines: runtime.NumGoroutine(), SysBytes: ms.Sys, NumGC: ms.NumGC}
}

// rssBytes reads the resident set size from /proc (Linux); 0 elsewhere.
func rssBytes() int64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(line, "VmRSS:"); ok {
			f := strings.Fields(v)
			if len(f) >= 1 {
				kb, err := strconv.ParseInt(f[0], 10, 64)
				if err == nil {
					return kb * 1024
				}
			}
		}
	}
	return 0
}
