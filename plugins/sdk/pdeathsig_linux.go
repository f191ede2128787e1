package sdk

import (
	"os/exec"
	"syscall"
)

// useParentDeathSignal is switched off only by tests of the parent watcher.
var useParentDeathSignal = true

// setParentDeathSignal makes the kernel kill the backend when the host dies,
// however it dies (even by SIGKILL, which runs no cleanup).
func setParentDeathSignal(cmd *exec.Cmd) {
	if !useParentDeathSignal {
		return
	}
	if cmd.SysProcAttr == nil {
		cmd.SysProcAttr = &syscall.SysProcAttr{}
	}
	cmd.SysProcAttr.Pdeathsig = syscall.SIGKILL
}
