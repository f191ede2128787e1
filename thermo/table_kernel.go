package thermo

// The batch kernel of TablePoints: two points at a time through an
// identity, eight-term table (every P(T) table the server builds for
// saturation, melting and sublimation curves with the default node count).
//
// One point's evaluation is a chain of dependent steps (segment index,
// breaks, coefficients, the recurrence), so a point at a time leaves most
// of the core idle. Two independent points written side by side give the
// processor two chains to overlap. Each point sees exactly the operations
// of Table.eval in the same order, so the values are the same bits
// (TestTablePointsMatchesTablePoint).

// pairable reports whether t can use evalPair.
func (t *Table) pairable() bool {
	return t.xt == TransformIdentity && t.yt == TransformIdentity && t.stride == 16
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
	c := (*[16]float64)(t.cd[i0*16 : i0*16+16])
	e := (*[16]float64)(t.cd[i1*16 : i1*16+16])

	w := 2*s0*s0 - 1
	v := 2*s1*s1 - 1
	w2 := 2 * w
	v2 := 2 * v
	t3 := s0 * (w2 - 1)
	u3 := s1 * (v2 - 1)
	ye, de := c[0]+c[4]*w, c[1]+c[5]*w
	ze, fe := e[0]+e[4]*v, e[1]+e[5]*v
	yo, do := c[2]*s0, c[3]*s0
	zo, fo := e[2]*s1, e[3]*s1
	yo += c[6] * t3
	do += c[7] * t3
	zo += e[6] * u3
	fo += e[7] * u3
	t4 := w2*w - 1
	u4 := v2*v - 1
	t5 := w2*t3 - s0
	u5 := v2*u3 - s1
	ye += c[8] * t4
	de += c[9] * t4
	ze += e[8] * u4
	fe += e[9] * u4
	yo += c[10] * t5
	do += c[11] * t5
	zo += e[10] * u5
	fo += e[11] * u5
	t6 := w2*t4 - w
	u6 := v2*u4 - v
	t7 := w2*t5 - t3
	u7 := v2*u5 - u3
	ye += c[12] * t6
	de += c[13] * t6
	ze += e[12] * u6
	fe += e[13] * u6
	yo += c[14] * t7
	do += c[15] * t7
	zo += e[14] * u7
	fo += e[15] * u7
	// eval multiplies the slope by dudx = 1 here, which changes no bits.
	return ye + yo, de + do, ze + zo, fe + fo
}
