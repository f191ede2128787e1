package goclient

import (
	"context"
	"errors"
	"fmt"
	"io"
	"time"

	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"
	"google.golang.org/protobuf/proto"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// EvaluateAll evaluates a batch of any size. Batches up to ChunkPoints go
// in one Evaluate call; larger ones are cut into chunks of ChunkPoints and
// sent through one EvaluateStream, and the answers are put back together in
// request order, exactly as one Evaluate would have returned them
// (branch_names merged, error indices counted from the start of the batch).
// With req.Strict the first bad chunk fails the call. A stream broken by
// UNAVAILABLE (a replica stopping, a backend restarting) is resumed on a
// new stream from the first point not yet answered, up to maxStreamResumes
// times in a row without progress. The response is expanded (see Expand).
func (c *Client) EvaluateAll(ctx context.Context, req *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	chunk := c.ChunkPoints
	if chunk <= 0 {
		chunk = DefaultChunkPoints
	}
	n := len(req.GetValues())
	if n <= chunk {
		for attempt := 0; ; attempt++ {
			resp, err := c.rpc.Evaluate(ctx, req)
			// gRPC's own retries (the service config) cover a replica
			// going away; a backend plugin restarting under an exact
			// evaluation takes longer, so keep trying as for streams.
			if err == nil {
				if err := Expand(resp); err != nil {
					return nil, err
				}
				return resp, nil
			}
			if !resumable(ctx, err, attempt) {
				return nil, err
			}
		}
	}
	out := newMerged(req, n)
	received := 0 // points answered so far, all from the start of the batch
	for attempt := 0; ; attempt++ {
		before := received
		err := c.streamFrom(ctx, req, chunk, out, &received)
		if err == nil {
			return out.resp, nil
		}
		// A replica that stops mid-stream, or a backend restarting under
		// an exact evaluation, ends the stream with UNAVAILABLE after some
		// chunks were answered, which gRPC's retry policy cannot replay;
		// resume from the first unanswered point on a new stream (the
		// balancer picks a live replica). Attempts count only while no
		// progress is made.
		if received > before {
			attempt = 0
		}
		if !resumable(ctx, err, attempt) {
			return nil, err
		}
	}
}

// resumable reports whether a call that failed with err may be tried again
// after this attempt, and then waits out the backoff: only UNAVAILABLE,
// at most maxStreamResumes times in a row, and not past ctx.
func resumable(ctx context.Context, err error, attempt int) bool {
	if status.Code(err) != codes.Unavailable || attempt >= maxStreamResumes || ctx.Err() != nil {
		return false
	}
	t := time.NewTimer(min(time.Duration(50<<attempt)*time.Millisecond, time.Second))
	defer t.Stop()
	select {
	case <-t.C:
		return true
	case <-ctx.Done():
		return false
	}
}

// maxStreamResumes bounds how often in a row EvaluateAll reopens a broken
// stream without getting any further: with its backoff (50 ms doubling to
// 1 s) about 6.5 s, enough for a backend plugin to restart.
const maxStreamResumes = 10

// streamFrom streams the points of req from *received on and merges the
// answers into out, advancing *received as chunks are answered.
func (c *Client) streamFrom(ctx context.Context, req *phaseboundpb.EvaluateRequest, chunk int, out *merged, received *int) error {
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	stream, err := c.rpc.EvaluateStream(ctx)
	if err != nil {
		return err
	}
	base := *received
	rest := proto.Clone(req).(*phaseboundpb.EvaluateRequest)
	rest.Values = req.GetValues()[base:]
	sendErr := make(chan error, 1)
	go func() {
		sendErr <- sendChunks(stream, rest, chunk)
	}()
	n := len(req.GetValues())
	for *received < n {
		msg, err := stream.Recv()
		if err == io.EOF {
			return fmt.Errorf("goclient: stream ended after %d of %d points", *received, n)
		}
		if err != nil {
			return err
		}
		msg.Offset += uint64(base)
		k, err := out.add(msg)
		if err != nil {
			return err
		}
		*received += k
	}
	if err := <-sendErr; err != nil && !errors.Is(err, io.EOF) {
		return err
	}
	return nil
}

func sendChunks(stream phaseboundpb.BoundaryService_EvaluateStreamClient, req *phaseboundpb.EvaluateRequest, chunk int) error {
	vals := req.GetValues()
	for lo := 0; lo < len(vals); lo += chunk {
		hi := min(lo+chunk, len(vals))
		part := &phaseboundpb.EvaluateRequest{
			Substance:          req.GetSubstance(),
			Curve:              req.GetCurve(),
			Branch:             req.GetBranch(),
			Given:              req.GetGiven(),
			Values:             vals[lo:hi],
			Exact:              req.GetExact(),
			Strict:             req.GetStrict(),
			AllowExtrapolation: req.GetAllowExtrapolation(),
			IncludeLatentHeat:  req.GetIncludeLatentHeat(),
		}
		if err := stream.Send(&phaseboundpb.EvaluateStreamRequest{Request: part}); err != nil {
			return err // io.EOF: the server ended the stream; Recv has the status
		}
	}
	return stream.CloseSend()
}

// merged assembles chunk responses into one response.
type merged struct {
	resp     *phaseboundpb.EvaluateResponse
	n        int
	latent   bool
	branchIx map[string]uint32
	remap    []uint32
}

func newMerged(req *phaseboundpb.EvaluateRequest, n int) *merged {
	r := &phaseboundpb.EvaluateResponse{
		TemperatureK: make([]float64, n),
		PressurePa:   make([]float64, n),
		DpdtPaPerK:   make([]float64, n),
		BranchIndex:  make([]uint32, n),
		Status:       make([]phaseboundpb.PointStatus, n),
	}
	m := &merged{resp: r, n: n, branchIx: map[string]uint32{}}
	if req.GetIncludeLatentHeat() {
		m.latent = true
		r.LatentHeatJPerMol = make([]float64, n)
		r.LatentHeatJPerKg = make([]float64, n)
		r.VolumeLowTPhaseM3PerMol = make([]float64, n)
		r.VolumeHighTPhaseM3PerMol = make([]float64, n)
		r.LatentHeatSource = make([]phaseboundpb.LatentHeatSource, n)
	}
	return m
}

// add copies one chunk into place and returns its number of points.
func (m *merged) add(msg *phaseboundpb.EvaluateStreamResponse) (int, error) {
	c := msg.GetResponse()
	off := msg.GetOffset()
	if err := Expand(c); err != nil {
		return 0, fmt.Errorf("%w (stream chunk at offset %d)", err, off)
	}
	k := len(c.GetStatus())
	if off+uint64(k) > uint64(m.n) {
		return 0, fmt.Errorf("goclient: malformed stream chunk at offset %d (%d points of %d)", off, k, m.n)
	}
	r := m.resp
	copy(r.TemperatureK[off:], c.TemperatureK)
	copy(r.PressurePa[off:], c.PressurePa)
	copy(r.DpdtPaPerK[off:], c.DpdtPaPerK)
	copy(r.Status[off:], c.Status)
	m.remap = m.remap[:0]
	for _, name := range c.GetBranchNames() {
		ix, ok := m.branchIx[name]
		if !ok {
			ix = uint32(len(r.BranchNames))
			r.BranchNames = append(r.BranchNames, name)
			m.branchIx[name] = ix
		}
		m.remap = append(m.remap, ix)
	}
	for i, b := range c.BranchIndex {
		if int(b) >= len(m.remap) {
			return 0, fmt.Errorf("goclient: stream chunk at offset %d names branch %d of %d", off, b, len(m.remap))
		}
		r.BranchIndex[int(off)+i] = m.remap[b]
	}
	if m.latent {
		if len(c.GetLatentHeatJPerMol()) != k || len(c.GetLatentHeatJPerKg()) != k || len(c.GetLatentHeatSource()) != k ||
			len(c.GetVolumeLowTPhaseM3PerMol()) != k || len(c.GetVolumeHighTPhaseM3PerMol()) != k {
			return 0, fmt.Errorf("goclient: stream chunk at offset %d lacks latent heats", off)
		}
		copy(r.LatentHeatJPerMol[off:], c.LatentHeatJPerMol)
		copy(r.LatentHeatJPerKg[off:], c.LatentHeatJPerKg)
		copy(r.VolumeLowTPhaseM3PerMol[off:], c.VolumeLowTPhaseM3PerMol)
		copy(r.VolumeHighTPhaseM3PerMol[off:], c.VolumeHighTPhaseM3PerMol)
		copy(r.LatentHeatSource[off:], c.LatentHeatSource)
	}
	for _, e := range c.GetErrors() {
		e.Index += uint32(off)
		r.Errors = append(r.Errors, e)
	}
	r.Exact = c.GetExact()
	r.TableMaxRelError = max(r.TableMaxRelError, c.GetTableMaxRelError())
	r.CatalogVersion = c.GetCatalogVersion()
	return k, nil
}
