package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"github.com/phasebound/phasebound/clients/goclient"
	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/bench"
)

func init() { register(newBenchCmd) }

const benchLong = `bench measures, in one run and on the same data, every way of getting a
point of a phase boundary, and compares each with its limit:

  direct      the correlation itself, in this process
  table       the server's compiled table (exported, evaluated here)
  rpc batch   Evaluate batches through the server
  echo floor  the same payload through Echo, which does no work
  exact       Evaluate through the backend plugin
  unary       single-point Evaluate from concurrent callers, against Echo
  latent heat the table and RPC paths with phase volumes and latent heats

Without --server it starts the server in this process on a real loopback
TCP port (127.0.0.1) with the --catalog (default: the embedded catalog).
With --server it measures that server; --catalog must then name the catalog
it serves (the direct correlations are built from it).

Figures are medians of --repeat repetitions. Goals (issue 5): batch RPC at
most 1.3 x the echo floor, table at most 1.0 x the direct correlation with
no allocations, table error at most 1e-10, unary calls/s at least 0.8 x the
echo unary rate.

--soak DURATION instead runs concurrent callers for DURATION (at most 1h)
and reports calls, errors, memory and goroutines at start and end.`

func newBenchCmd(a *app) *cobra.Command {
	var (
		points, repeat, batch, callers int
		unaryDur, soak                 time.Duration
		seed                           uint64
	)
	cmd := &cobra.Command{
		Use:   "bench",
		Short: "Measure the evaluation paths against their limits (or soak the server)",
		Long:  benchLong,
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			switch {
			case points < 1000 || points > 100_000_000:
				return fmt.Errorf("--points %d outside [1000, 100000000]", points)
			case repeat < 1 || repeat > 100:
				return fmt.Errorf("--repeat %d outside [1, 100]", repeat)
			case batch < 1 || batch > 1_000_000:
				return fmt.Errorf("--batch %d outside [1, 1000000]", batch)
			case callers < 1 || callers > 1024:
				return fmt.Errorf("--callers %d outside [1, 1024]", callers)
			case unaryDur < 10*time.Millisecond || unaryDur > time.Minute:
				return fmt.Errorf("--unary-duration %v outside [10ms, 1m]", unaryDur)
			case soak < 0 || soak > bench.MaxSoak:
				return fmt.Errorf("--soak %v outside [0, %v]", soak, bench.MaxSoak)
			}
			return a.runBench(cmd.Context(), bench.Config{
				Points: points, Repeat: repeat, Batch: batch, Callers: callers, UnaryDuration: unaryDur, Seed: seed,
			}, soak)
		},
	}
	f := cmd.Flags()
	f.IntVar(&points, "points", bench.DefaultPoints, "points per measured curve branch")
	f.IntVar(&repeat, "repeat", bench.DefaultRepeat, "repetitions; medians are reported")
	f.IntVar(&batch, "batch", bench.DefaultBatch, "points per Evaluate call")
	f.IntVar(&callers, "callers", bench.DefaultCallers, "concurrent callers (unary rate and soak)")
	f.DurationVar(&unaryDur, "unary-duration", bench.DefaultUnaryDuration, "length of each unary-rate measurement")
	f.DurationVar(&soak, "soak", 0, "run a soak of this duration instead (e.g. 60s; at most 1h)")
	f.Uint64Var(&seed, "seed", 1, "seed of the bench data")
	return cmd
}

// runBench connects (or starts the loopback server) and runs the bench or
// the soak.
func (a *app) runBench(ctx context.Context, cfg bench.Config, soak time.Duration) error {
	cat, err := a.loadCatalog()
	if err != nil {
		return err
	}
	addr, inProcess := a.servers, a.servers == ""
	if inProcess {
		fmt.Fprintln(a.stderr, "bench: starting the server on loopback (compiling tables)...")
		log := slog.New(slog.NewTextHandler(a.stderr, &slog.HandlerOptions{Level: slog.LevelWarn}))
		lb, err := bench.StartLoopback(ctx, cat, server.Options{Logger: log, HostConfig: sdk.HostConfig{Logger: log}})
		if err != nil {
			return err
		}
		defer lb.Close()
		addr = lb.Addr
	}
	opts := goclient.Options{TokenFile: a.tokenFile, TLSCA: a.tlsCA, TLSCert: a.tlsCert, TLSKey: a.tlsKey}
	if inProcess {
		opts = goclient.Options{}
	}
	c, err := goclient.Dial(ctx, addr, opts)
	if err != nil {
		return err
	}
	defer c.Close()
	where := addr
	if inProcess {
		where = addr + " (in-process server, loopback TCP)"
	}
	if soak > 0 {
		fmt.Fprintf(a.stderr, "bench: soaking %s for %v with %d callers...\n", where, soak, cfg.Callers)
		rep, err := bench.Soak(ctx, bench.SoakConfig{Client: c.Raw(), Duration: soak, Callers: cfg.Callers, InProcess: inProcess})
		if err != nil {
			return a.rpcError(err)
		}
		if a.jsonOut {
			return writeBenchJSON(a.stdout, struct {
				Server string `json:"server"`
				*bench.SoakReport
			}{where, rep})
		}
		printSoak(a.stdout, where, rep)
		if rep.Errors > 0 || rep.PointMismatches > 0 {
			return fmt.Errorf("soak: %d failed calls and %d wrong per-point answers (first: %s)", rep.Errors, rep.PointMismatches, rep.FirstError)
		}
		return nil
	}
	cfg.Client, cfg.Catalog = c.Raw(), cat
	cfg.Progress = func(msg string) { fmt.Fprintln(a.stderr, "bench: "+msg) }
	rep, err := bench.Run(ctx, cfg)
	if err != nil {
		return a.rpcError(err)
	}
	if a.jsonOut {
		return writeBenchJSON(a.stdout, struct {
			Server string `json:"server"`
			*bench.Report
		}{where, rep})
	}
	printBench(a.stdout, where, rep)
	return nil
}

func writeBenchJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

func metStr(g bench.Goal) string {
	if g.Met {
		return "met"
	}
	return "NOT MET"
}

func printBench(w io.Writer, where string, r *bench.Report) {
	fmt.Fprintf(w, "phasebound bench: %s\n", where)
	fmt.Fprintf(w, "%d points (%d per branch x %d branches), median of %d repetitions, batches of %d, GOMAXPROCS %d, %s\n\n",
		r.Points, r.PointsPerCase, len(r.Families), r.Repeat, r.BatchPoints, r.GOMAXPROCS, r.GoVersion)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "branch\tfamily\tdirect ns/pt\ttable ns/pt\tbatch table\trpc ns/pt\techo ns/pt\texact ns/pt\ttable err\t")
	for _, f := range r.Families {
		name := f.Substance + " " + f.Curve
		if f.Branch != "" {
			name += " " + f.Branch
		}
		fmt.Fprintf(tw, "%s\t%s\t%.1f\t%.1f\t%.1f\t%.1f\t%.1f\t%.1f\t%.1e\t\n", name, f.Family,
			f.DirectNs, f.TableNs, f.TableBatchNs, f.RPCBatchNs, f.EchoFloorNs, f.ExactNs, f.TableMaxRelError)
	}
	fmt.Fprintf(tw, "all\t\t%.1f\t%.1f\t%.1f\t%.1f\t%.1f\t%.1f\t%.1e\t\n", r.DirectNs, r.TableNs, r.TableBatchNs, r.RPCBatchNs, r.EchoFloorNs, r.ExactNs, r.TableMaxRelError)
	tw.Flush()
	l := r.Latent
	fmt.Fprintf(w, "\nlatent heat (%d branches with phase volumes), ns/point:\n", l.Cases)
	fmt.Fprintf(w, "  direct   %.1f  with latent heat %.1f  (x%.2f)\n", l.DirectNs, l.LatentDirectNs, l.DirectRatio)
	fmt.Fprintf(w, "  table    %.1f  with latent heat %.1f  (x%.2f; the two volume tables alone %.1f)\n", l.TableNs, l.LatentTableNs, l.TableRatio, l.VolumeTablesNs)
	fmt.Fprintf(w, "  rpc      %.1f  with latent heat %.1f  (x%.2f; its echo floor %.1f, ratio %.2f)\n",
		l.RPCBatchNs, l.LatentRPCBatchNs, l.RPCRatio, l.LatentEchoFloorNs, l.RPCOverEcho)
	fmt.Fprintf(w, "\nunary, %d callers: Evaluate %.0f calls/s, Echo %.0f calls/s\n", r.UnaryCallers, r.UnaryCPS, r.EchoUnaryCPS)
	fmt.Fprintf(w, "response bytes/point: Evaluate %.1f, Echo floor %.1f; served values equal the exported table: %v\n\n",
		r.EvaluateResponseBytesPerPoint, r.EchoResponseBytesPerPoint, r.RPCMatchesTable)
	g := r.Goals
	fmt.Fprintf(w, "goals:\n")
	fmt.Fprintf(w, "  rpc batch / echo floor   %6.3f  <= %.1f   %s (echo + batch table work on one core would give %.3f)\n", g.RPCOverEcho.Value, g.RPCOverEcho.Limit, metStr(g.RPCOverEcho), r.Ratios.EchoPlusTableOverEcho)
	fmt.Fprintf(w, "  table / direct           %6.3f  <= %.1f   %s\n", g.TableOverDirect.Value, g.TableOverDirect.Limit, metStr(g.TableOverDirect))
	fmt.Fprintf(w, "  table allocs / point     %6.3f  <= 0     %s\n", g.TableAllocs.Value, metStr(g.TableAllocs))
	fmt.Fprintf(w, "  table max rel error     %.1e  <= %.0e %s\n", g.TableError.Value, g.TableError.Limit, metStr(g.TableError))
	fmt.Fprintf(w, "  unary / echo unary       %6.3f  >= %.1f   %s\n", g.UnaryOverEcho.Value, g.UnaryOverEcho.Limit, metStr(g.UnaryOverEcho))
}

func printSoak(w io.Writer, where string, r *bench.SoakReport) {
	mb := func(b int64) float64 { return float64(b) / (1 << 20) }
	fmt.Fprintf(w, "phasebound soak: %s, %.1f s, %d callers\n", where, r.Seconds, r.Callers)
	fmt.Fprintf(w, "calls %d (%.0f/s), errors %d, points %d, wrong per-point answers %d\n",
		r.Calls, r.CallsPerSecond, r.Errors, r.Points, r.PointMismatches)
	fmt.Fprintf(w, "memory (%s):\n", r.Scope)
	fmt.Fprintf(w, "  start: RSS %.1f MiB, heap %.1f MiB, %d goroutines\n", mb(r.Start.RSSBytes), mb(int64(r.Start.HeapBytes)), r.Start.Goroutines)
	fmt.Fprintf(w, "  end:   RSS %.1f MiB, heap %.1f MiB, %d goroutines (peak RSS %.1f MiB)\n", mb(r.End.RSSBytes), mb(int64(r.End.HeapBytes)), r.End.Goroutines, mb(r.PeakRSSBytes))
	if r.FirstError != "" {
		fmt.Fprintf(w, "first error: %s\n", r.FirstError)
	}
}
