package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"github.com/phasebound/phasebound/plugins/sdk"
)

func init() { register(newBackendCmd) }

// newBackendCmd runs this binary as one of the standard backends, so that
// a deployment is a single file. Only the server starts it.
func newBackendCmd(a *app) *cobra.Command {
	return &cobra.Command{
		Use:    "backend NAME",
		Short:  "Run as a standard backend plugin (" + strings.Join(sdk.StandardNames(), ", ") + "); started by the server, not by hand",
		Hidden: true,
		Args:   cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := sdk.CheckLaunched(); err != nil {
				return err
			}
			b, err := sdk.Standard(args[0])
			if err != nil {
				return fmt.Errorf("backend: %w", err)
			}
			sdk.Serve(b)
			return nil
		},
	}
}
