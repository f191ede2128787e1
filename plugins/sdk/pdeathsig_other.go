//go:build !linux

package sdk

import "os/exec"

// setParentDeathSignal does nothing where the kernel has no parent-death
// signal; the backend's parent watcher (see Serve) ends it instead.
func setParentDeathSignal(*exec.Cmd) {}
