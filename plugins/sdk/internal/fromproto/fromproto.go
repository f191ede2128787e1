// Package fromproto converts plugin-protocol messages into the SDK's Go values.
package fromproto

import (
	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
	"github.com/phasebound/phasebound/thermo"
)

// Params converts wire parameters to thermo.Params. A parameter sent with
// no message at all becomes an empty list, which the family then reports by
// name.
func Params(m map[string]*pluginpb.ParamValues) thermo.Params {
	p := make(thermo.Params, len(m))
	for name, v := range m {
		p[name] = v.GetValues()
	}
	return p
}

// Indices converts wire point indices to ints, shifted by offset (the
// position of the message's first point in the caller's whole batch).
func Indices(ix []uint32, offset int) []int {
	if len(ix) == 0 {
		return nil
	}
	out := make([]int, len(ix))
	for i, v := range ix {
		out[i] = int(v) + offset
	}
	return out
}
