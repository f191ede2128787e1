// Command phasebound serves, queries, fits, audits, plots and benchmarks
// phase boundaries. See the README for the command-line contract.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"

	"github.com/spf13/cobra"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// commandBuilders are the subcommands; each file adds its own with
// register in an init function.
var commandBuilders []func(*app) *cobra.Command

func register(b func(*app) *cobra.Command) { commandBuilders = append(commandBuilders, b) }

// app holds the global flags and the standard streams of one run.
type app struct {
	stdin          io.Reader
	stdout, stderr io.Writer

	catalogPath string // --catalog; "" is the embedded default
	servers     string // --server; "" runs the service in-process
	jsonOut     bool   // --json
	tokenFile   string // --token-file
	tlsCA       string // --tls-ca
	tlsCert     string // --tls-cert
	tlsKey      string // --tls-key
}

// exitError carries a specific exit code.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	a := &app{stdin: stdin, stdout: stdout, stderr: stderr}
	root := &cobra.Command{
		Use:           "phasebound",
		Short:         "Phase boundaries (saturation, melting, sublimation) for simulation codes",
		Long:          rootLong,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.CompletionOptions.DisableDefaultCmd = true
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.SetIn(stdin)
	pf := root.PersistentFlags()
	pf.StringVar(&a.catalogPath, "catalog", "", "catalog file (TOML); default: the embedded catalog")
	pf.StringVar(&a.servers, "server", "", "server address(es) HOST:PORT[,HOST:PORT...] or dns:///NAME; default: run in-process")
	pf.BoolVar(&a.jsonOut, "json", false, "print one JSON object on stdout, SI units")
	pf.StringVar(&a.tokenFile, "token-file", "", "file holding the bearer token")
	pf.StringVar(&a.tlsCA, "tls-ca", "", "CA certificate (PEM) that signs the server's certificate")
	pf.StringVar(&a.tlsCert, "tls-cert", "", "certificate (PEM): the client's for mutual TLS, the server's for serve")
	pf.StringVar(&a.tlsKey, "tls-key", "", "private key (PEM) for --tls-cert")
	for _, b := range commandBuilders {
		root.AddCommand(b(a))
	}
	root.SetArgs(args)

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := root.ExecuteContext(ctx); err != nil {
		fmt.Fprintln(stderr, "phasebound: "+err.Error())
		var ee *exitError
		if errors.As(err, &ee) {
			return ee.code
		}
		return 1
	}
	return 0
}

const rootLong = `phasebound answers phase-boundary questions for simulation codes: the
saturation, melting and sublimation curves of each substance in a catalog,
their slopes dP/dT, latent heats by the Clapeyron equation, and which phase
a state is in. Every number in JSON output is SI (K, Pa, J/mol, m^3/mol).

CAUTION: results are only as good as the correlation behind each curve;
'phasebound substances' lists every curve's validity range, uncertainty and
provenance. They are not a substitute for design codes: pressure-vessel,
cryogenic and freezing designs must follow the applicable local codes and be
checked by a licensed engineer.`
