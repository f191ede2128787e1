// Package toproto converts the SDK's Go values into plugin-protocol messages.
package toproto

import (
	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
	"github.com/phasebound/phasebound/thermo"
)

// Params converts correlation parameters to their wire form. The slices are
// shared, not copied: the message is marshalled before the caller may touch
// them again.
func Params(p thermo.Params) map[string]*pluginpb.ParamValues {
	if len(p) == 0 {
		return nil
	}
	m := make(map[string]*pluginpb.ParamValues, len(p))
	for name, v := range p {
		m[name] = &pluginpb.ParamValues{Values: v}
	}
	return m
}

// Indices converts point indices to the wire's unsigned form. Indices are
// positions in a batch and never negative.
func Indices(ix []int) []uint32 {
	if len(ix) == 0 {
		return nil
	}
	out := make([]uint32, len(ix))
	for i, v := range ix {
		out[i] = uint32(v)
	}
	return out
}
