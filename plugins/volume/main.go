// Command volume is the standard phasebound backend "volume"; the phasebound server starts it.
package main

import "github.com/phasebound/phasebound/plugins/sdk"

func main() { sdk.Serve(sdk.MustStandard("volume")) }
