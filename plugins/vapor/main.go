// Command vapor is the standard phasebound backend "vapor"; the phasebound server starts it.
package main

import "github.com/phasebound/phasebound/plugins/sdk"

func main() { sdk.Serve(sdk.MustStandard("vapor")) }
