package thermo

// The batch kernel of TablePoints: two points at a time through an
// identity table in the monomial form (every P(T) table the server builds
// for saturation, melting and sublimation curves with the default node
// count).
//
// One point's evaluation is a chain of dependent steps (segment index,
// breaks, coefficients, the recurrence), so a point at a time leaves most
// of the core idle. Two independent points written side by side give the
// processor two chains to overlap. Each point sees exactly the operations
// of Table.eval in the same order, so the values are the same bits
// (TestTablePointsMatchesTablePoint).

// pairable reports whether t can use evalPair.
func (t *Table) pairable() bool {
	return t.xt == TransformIdentity && t.yt == TransformIdentity && t.stride == 2*monoTerms
}

// evalPair is Table.eval at x0 and x1, both inside the domain, for a
// pairable table.
func (t *Table) evalPair(x0, x1 float64) (y0, d0, y1, d1 float64) {
	// Table.eval's segment lookup, written out for both points (a call
	// each would spill the other point's registers).
	nb := len(t.bins) - 1
	j0 := int((x0 - t.u0) * t.binScale)
	j1 := int((x1 - t.u0) * t.binScale)
	if j0 < 0 {
		j0 = 0
	} else if j0 >= nb {
		j0 = nb - 1
	}
	if j1 < 0 {
		j1 = 0
	} else if j1 >= nb {
		j1 = nb - 1
	}
	i0, i1 := int(t.bins[j0]), int(t.bins[j1])
	if i0 != int(t.bins[j0+1]) || x0 < t.breaks[i0] || x0 > t.breaks[i0+1] {
		i0 = t.segment(x0)
	}
	if i1 != int(t.bins[j1+1]) || x1 < t.breaks[i1] || x1 > t.breaks[i1+1] {
		i1 = t.segment(x1)
	}
	s0 := ((x0 - t.breaks[i0]) - (t.breaks[i0+1] - x0)) * t.invWidth[i0]
	s1 := ((x1 - t.breaks[i1]) - (t.breaks[i1+1] - x1)) * t.invWidth[i1]
	// Two independent Estrin evaluations, which the processor overlaps.
	y0, d0 = monoEval((*[2 * monoTerms]float64)(t.cd[i0*(2*monoTerms):i0*(2*monoTerms)+2*monoTerms]), s0)
	y1, d1 = monoEval((*[2 * monoTerms]float64)(t.cd[i1*(2*monoTerms):i1*(2*monoTerms)+2*monoTerms]), s1)
	// eval multiplies the slope by dudx = 1 here, which changes no bits.
	return y0, d0, y1, d1
}
