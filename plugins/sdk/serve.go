package sdk

import (
	"fmt"
	"os"
	"regexp"
	"strings"
	"time"

	"github.com/hashicorp/go-hclog"
	"github.com/hashicorp/go-plugin"
)

// logLevelEnv sets a backend's log level (trace, debug, info, warn, error);
// the default is info. Logs go to stderr as JSON lines, which the host
// relays into its own log.
const logLevelEnv = "PHASEBOUND_BACKEND_LOG_LEVEL"

// parentPollInterval is how often a backend checks that its host still
// lives (the portable fallback to the parent-death signal).
const parentPollInterval = time.Second

// Serve runs b as a backend plugin until the host stops it, then returns.
// It is the whole of a backend's main function:
//
//	func main() { sdk.Serve(myBackend) }
//
// Run by hand (not by the phasebound host) it prints that it is a backend
// and exits with status 1; a malformed Backend also exits 1 with the reason.
// Serve never writes to stdout, which carries go-plugin's handshake.
func Serve(b Backend) {
	if err := CheckLaunched(); err != nil {
		fmt.Fprintln(os.Stderr, "phasebound: "+err.Error())
		os.Exit(1)
	}
	if err := b.validate(); err != nil {
		fmt.Fprintln(os.Stderr, "phasebound: "+err.Error())
		os.Exit(1)
	}
	level := hclog.LevelFromString(os.Getenv(logLevelEnv))
	if level == hclog.NoLevel {
		level = hclog.Info
	}
	logger := hclog.New(&hclog.LoggerOptions{
		Name:       b.Name,
		Level:      level,
		Output:     os.Stderr,
		JSONFormat: true,
	})
	if missing := standardMissing(b.Name); len(missing) > 0 {
		logger.Warn("families of this standard backend are not in this build", "missing", strings.Join(missing, ", "))
	}
	go watchParent(logger, os.Getppid())
	plugin.Serve(&plugin.ServeConfig{
		HandshakeConfig:  handshake,
		VersionedPlugins: pluginSets(newBackendServer(b, logger)),
		GRPCServer:       newGRPCServer,
		Logger:           logger,
	})
}

// watchParent ends the process when its parent changes: the host died
// without killing it (the parent-death signal covers Linux; this covers the
// rest), and a backend must never outlive its server.
func watchParent(logger hclog.Logger, ppid int) {
	if ppid <= 1 {
		return // already orphaned at start, or no parent to watch
	}
	for range time.Tick(parentPollInterval) {
		if os.Getppid() != ppid {
			logger.Warn("host process is gone; backend exits", "host_pid", ppid)
			os.Exit(2)
		}
	}
}

var backendNameRE = regexp.MustCompile(`^[a-z0-9][a-z0-9-]*$`)

// validate checks that a Backend can be served: a proper name, at least one
// family, and no two families of one kind sharing a name.
func (b Backend) validate() error {
	if !backendNameRE.MatchString(b.Name) {
		return fmt.Errorf("sdk: backend name %q must match [a-z0-9][a-z0-9-]*", b.Name)
	}
	if len(b.Families) == 0 && len(b.Volumes) == 0 {
		return fmt.Errorf("sdk: backend %q serves no families", b.Name)
	}
	seen := map[string]bool{}
	for _, f := range b.Families {
		if f == nil {
			return fmt.Errorf("sdk: backend %q has a nil curve family", b.Name)
		}
		if seen[f.Name()] {
			return fmt.Errorf("sdk: backend %q lists curve family %q twice", b.Name, f.Name())
		}
		seen[f.Name()] = true
	}
	seen = map[string]bool{}
	for _, f := range b.Volumes {
		if f == nil {
			return fmt.Errorf("sdk: backend %q has a nil volume family", b.Name)
		}
		if seen[f.Name()] {
			return fmt.Errorf("sdk: backend %q lists volume family %q twice", b.Name, f.Name())
		}
		seen[f.Name()] = true
	}
	return nil
}
