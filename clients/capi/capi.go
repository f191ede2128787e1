package main

/*
#include <stddef.h>
#include <stdint.h>
void pb_set_error(const char *msg, size_t n);
void pb_clear_error(void);
*/
import "C"

import (
	"context"
	"errors"
	"fmt"
	"runtime/debug"
	"strings"
	"sync"
	"sync/atomic"
	"time"
	"unsafe"

	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	"github.com/phasebound/phasebound/clients/goclient"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

func main() {}

// Return codes (enum phasebound_code in phasebound.h).
const (
	codeOK          = 0
	codeInvalid     = 1
	codeBadHandle   = 2
	codeServer      = 3
	codePoints      = 4
	codeBuffer      = 5
	codeInternal    = 6
	flagExact       = 1
	flagExtrapolate = 2
	// maxPoints bounds one call's n: a larger n is surely a bad length.
	maxPoints = 1 << 31
	// callTimeout bounds one call to the server.
	callTimeout = 10 * time.Minute
)

// apiError is an error with its return code.
type apiError struct {
	code int
	msg  string
}

func (e *apiError) Error() string { return e.msg }

func fail(code int, format string, a ...any) error {
	return &apiError{code: code, msg: fmt.Sprintf(format, a...)}
}

// finish turns err into a return code and sets the calling thread's
// message. It also catches a panic, so that nothing escapes into the host
// program: call it deferred as `defer finish(&rc, &err)`.
func finish(rc *C.int, err *error) {
	if r := recover(); r != nil {
		*err = fail(codeInternal, "phasebound: internal error (please report): %v\n%s", r, debug.Stack())
	}
	if *err == nil {
		C.pb_clear_error()
		*rc = codeOK
		return
	}
	msg := (*err).Error()
	if !strings.HasPrefix(msg, "phasebound: ") {
		msg = "phasebound: " + msg
	}
	b := []byte(msg)
	C.pb_set_error((*C.char)(unsafe.Pointer(&b[0])), C.size_t(len(b)))
	var ae *apiError
	if errors.As(*err, &ae) {
		*rc = C.int(ae.code)
	} else {
		*rc = codeInternal
	}
}

// Handles: positive integers naming Go objects, so that C never holds a Go
// pointer. Lookups take a read lock only.
var (
	handleMu   sync.RWMutex
	nextHandle atomic.Int64
	clients    = map[int64]*goclient.Client{}
	tableSets  = map[int64]*tablesHandle{}
)

// tablesHandle holds the current tables of one substance; refresh swaps
// them atomically, evaluation loads them once per call.
type tablesHandle struct {
	client    *goclient.Client
	substance string
	cur       atomic.Pointer[tableSet]
	refresh   sync.Mutex // one refresh at a time
}

func clientOf(h C.int64_t) (*goclient.Client, error) {
	handleMu.RLock()
	c := clients[int64(h)]
	handleMu.RUnlock()
	if c == nil {
		return nil, fail(codeBadHandle, "client handle %d is not open (phasebound_connect returns one)", int64(h))
	}
	return c, nil
}

func tablesOf(h C.int64_t) (*tablesHandle, error) {
	handleMu.RLock()
	t := tableSets[int64(h)]
	handleMu.RUnlock()
	if t == nil {
		return nil, fail(codeBadHandle, "table handle %d is not open (phasebound_tables_fetch returns one)", int64(h))
	}
	return t, nil
}

// goString converts an optional C string ("" for NULL).
func goString(s *C.char) string {
	if s == nil {
		return ""
	}
	return C.GoString(s)
}

// serverError turns a gRPC error into a return code and one line.
func serverError(err error) error {
	st, ok := status.FromError(err)
	if !ok {
		return fail(codeServer, "%v", err)
	}
	switch st.Code() {
	case codes.InvalidArgument, codes.NotFound, codes.OutOfRange:
		return fail(codeInvalid, "%s", st.Message())
	}
	return fail(codeServer, "server: %s: %s", st.Code(), st.Message())
}

// doubles views a C array of n doubles as a slice (nil for NULL).
func doubles(p *C.double, n int) []float64 {
	if p == nil {
		return nil
	}
	return unsafe.Slice((*float64)(unsafe.Pointer(p)), n)
}

func int32s(p *C.int32_t, n int) []int32 {
	if p == nil {
		return nil
	}
	return unsafe.Slice((*int32)(unsafe.Pointer(p)), n)
}

// batchArgs validates the arguments shared by both evaluate calls.
func batchArgs(curve, given C.int, values *C.double, n C.size_t) (byT bool, xs []float64, err error) {
	if _, err := kindFromProto(int(curve)); err != nil {
		return false, nil, fail(codeInvalid, "%v", err)
	}
	switch given {
	case C.int(phaseboundpb.Variable_VARIABLE_TEMPERATURE):
		byT = true
	case C.int(phaseboundpb.Variable_VARIABLE_PRESSURE):
	default:
		return false, nil, fail(codeInvalid, "given %d (valid: 1 temperature in K, 2 pressure in Pa)", int(given))
	}
	if uint64(n) > maxPoints {
		return false, nil, fail(codeInvalid, "n = %d points is not a plausible length (at most %d per call)", uint64(n), uint64(maxPoints))
	}
	if n > 0 && values == nil {
		return false, nil, fail(codeInvalid, "values is NULL for n = %d points", uint64(n))
	}
	return byT, doubles(values, int(n)), nil
}

//export phasebound_connect
func phasebound_connect(address, tokenFile, tlsCA, tlsCert, tlsKey *C.char, out *C.int64_t) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	if out == nil {
		err = fail(codeInvalid, "out is NULL")
		return
	}
	addr := strings.TrimSpace(goString(address))
	if addr == "" {
		err = fail(codeInvalid, "empty server address (want HOST:PORT[,HOST:PORT...] or dns:///NAME:PORT)")
		return
	}
	c, derr := goclient.Dial(context.Background(), addr, goclient.Options{
		TokenFile: goString(tokenFile), TLSCA: goString(tlsCA), TLSCert: goString(tlsCert), TLSKey: goString(tlsKey),
	})
	if derr != nil {
		err = fail(codeInvalid, "%v", derr)
		return
	}
	h := nextHandle.Add(1)
	handleMu.Lock()
	clients[h] = c
	handleMu.Unlock()
	*out = C.int64_t(h)
	return
}

//export phasebound_close
func phasebound_close(client C.int64_t) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	handleMu.Lock()
	c := clients[int64(client)]
	delete(clients, int64(client))
	handleMu.Unlock()
	if c == nil {
		err = fail(codeBadHandle, "client handle %d is not open", int64(client))
		return
	}
	c.Close()
	return
}

// copyString writes s NUL-terminated into buf of len bytes.
func copyString(s string, buf *C.char, n C.size_t) error {
	if buf == nil {
		return fail(codeInvalid, "buf is NULL")
	}
	if uint64(n) < uint64(len(s))+1 {
		return fail(codeBuffer, "buffer of %d bytes is too small for %d (give at least %d)", uint64(n), len(s)+1, len(s)+1)
	}
	dst := unsafe.Slice((*byte)(unsafe.Pointer(buf)), len(s)+1)
	copy(dst, s)
	dst[len(s)] = 0
	return nil
}

//export phasebound_catalog_version
func phasebound_catalog_version(client C.int64_t, buf *C.char, n C.size_t) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	c, err := clientOf(client)
	if err != nil {
		return
	}
	ctx, cancel := context.WithTimeout(context.Background(), callTimeout)
	defer cancel()
	r, rerr := c.ListSubstances(ctx)
	if rerr != nil {
		err = serverError(rerr)
		return
	}
	err = copyString(r.GetCatalogVersion(), buf, n)
	return
}

//export phasebound_evaluate
func phasebound_evaluate(client C.int64_t, substance *C.char, curve C.int, branch *C.char, given C.int,
	values *C.double, n C.size_t, flags C.int,
	temperature, pressure, dpdt *C.double, st *C.int32_t, latent *C.double) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	c, err := clientOf(client)
	if err != nil {
		return
	}
	byT, xs, err := batchArgs(curve, given, values, n)
	if err != nil {
		return
	}
	if substance == nil {
		err = fail(codeInvalid, "substance is NULL")
		return
	}
	if flags&^(flagExact|flagExtrapolate) != 0 {
		err = fail(codeInvalid, "flags %d (valid: PHASEBOUND_EXACT = 1, PHASEBOUND_ALLOW_EXTRAPOLATION = 2, or both)", int(flags))
		return
	}
	giv := phaseboundpb.Variable_VARIABLE_PRESSURE
	if byT {
		giv = phaseboundpb.Variable_VARIABLE_TEMPERATURE
	}
	req := &phaseboundpb.EvaluateRequest{
		Substance: goString(substance), Curve: phaseboundpb.CurveKind(curve), Branch: goString(branch),
		Given: giv, Values: xs, Exact: flags&flagExact != 0, AllowExtrapolation: flags&flagExtrapolate != 0,
		IncludeLatentHeat: latent != nil,
	}
	ctx, cancel := context.WithTimeout(context.Background(), callTimeout)
	defer cancel()
	r, rerr := c.EvaluateAll(ctx, req)
	if rerr != nil {
		err = serverError(rerr)
		return
	}
	// EvaluateAll answers in the per-point form (goclient.Expand): the
	// server's compact form, where every point is OK on one branch and
	// status is empty, arrives here as one POINT_STATUS_OK per point, so
	// the caller's status array is always filled.
	m := int(n)
	if len(r.GetStatus()) != m || len(r.GetPressurePa()) != m || len(r.GetTemperatureK()) != m || len(r.GetDpdtPaPerK()) != m ||
		(latent != nil && len(r.GetLatentHeatJPerKg()) != m) {
		err = fail(codeServer, "server answered %d points for %d", len(r.GetStatus()), m)
		return
	}
	copy(doubles(temperature, m), r.GetTemperatureK())
	copy(doubles(pressure, m), r.GetPressurePa())
	copy(doubles(dpdt, m), r.GetDpdtPaPerK())
	copy(doubles(latent, m), r.GetLatentHeatJPerKg())
	if s := int32s(st, m); s != nil {
		for i, v := range r.GetStatus() {
			s[i] = int32(v)
		}
	}
	if errs := r.GetErrors(); len(errs) > 0 {
		err = fail(codePoints, "%d of %d points failed; point %d: %s", len(errs), m, errs[0].GetIndex(), errs[0].GetMessage())
	}
	return
}

// fetch downloads and rebuilds a substance's tables.
func fetch(c *goclient.Client, substance string) (*tableSet, error) {
	ctx, cancel := context.WithTimeout(context.Background(), callTimeout)
	defer cancel()
	r, err := c.ExportTables(ctx, substance)
	if err != nil {
		return nil, serverError(err)
	}
	ts, err := newTableSet(substance, r)
	if err != nil {
		return nil, fail(codeServer, "tables of %q from the server are unusable: %v", substance, err)
	}
	return ts, nil
}

//export phasebound_tables_fetch
func phasebound_tables_fetch(client C.int64_t, substance *C.char, out *C.int64_t) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	c, err := clientOf(client)
	if err != nil {
		return
	}
	if substance == nil || out == nil {
		err = fail(codeInvalid, "substance or out is NULL")
		return
	}
	sub := goString(substance)
	ts, err := fetch(c, sub)
	if err != nil {
		return
	}
	th := &tablesHandle{client: c, substance: sub}
	th.cur.Store(ts)
	h := nextHandle.Add(1)
	handleMu.Lock()
	tableSets[h] = th
	handleMu.Unlock()
	*out = C.int64_t(h)
	return
}

//export phasebound_tables_evaluate
func phasebound_tables_evaluate(tables C.int64_t, curve C.int, branch *C.char, given C.int,
	values *C.double, n C.size_t,
	temperature, pressure, dpdt *C.double, st *C.int32_t, latent *C.double) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	th, err := tablesOf(tables)
	if err != nil {
		return
	}
	byT, xs, err := batchArgs(curve, given, values, n)
	if err != nil {
		return
	}
	kind, _ := kindFromProto(int(curve))
	m := int(n)
	ts := th.cur.Load()
	failed, first, eerr := ts.evaluate(kind, goString(branch), byT, xs, outputs{
		T: doubles(temperature, m), P: doubles(pressure, m), D: doubles(dpdt, m),
		Status: int32s(st, m), Latent: doubles(latent, m),
	})
	switch {
	case eerr != nil:
		err = fail(codeInvalid, "%v", eerr)
	case failed > 0:
		err = fail(codePoints, "%d of %d points failed; %s", failed, m, first)
	}
	return
}

//export phasebound_tables_refresh
func phasebound_tables_refresh(tables C.int64_t, changed *C.int) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	if changed != nil {
		*changed = 0
	}
	th, err := tablesOf(tables)
	if err != nil {
		return
	}
	did, err := th.refreshNow()
	if did && changed != nil {
		*changed = 1
	}
	return
}

// refreshNow asks the server for its catalog version and, when it differs
// from the tables', fetches the new tables and swaps them in. On error the
// old tables stay.
func (th *tablesHandle) refreshNow() (changed bool, err error) {
	th.refresh.Lock()
	defer th.refresh.Unlock()
	ctx, cancel := context.WithTimeout(context.Background(), callTimeout)
	defer cancel()
	d, err := th.client.DescribeSubstance(ctx, th.substance)
	if err != nil {
		return false, serverError(err)
	}
	if d.GetCatalogVersion() == th.cur.Load().version {
		return false, nil
	}
	ts, err := fetch(th.client, th.substance)
	if err != nil {
		return false, err
	}
	th.cur.Store(ts)
	return true, nil
}

//export phasebound_tables_version
func phasebound_tables_version(tables C.int64_t, buf *C.char, n C.size_t) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	th, err := tablesOf(tables)
	if err != nil {
		return
	}
	err = copyString(th.cur.Load().version, buf, n)
	return
}

//export phasebound_tables_max_rel_error
func phasebound_tables_max_rel_error(tables C.int64_t, out *C.double) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	th, err := tablesOf(tables)
	if err != nil {
		return
	}
	if out == nil {
		err = fail(codeInvalid, "out is NULL")
		return
	}
	*out = C.double(th.cur.Load().maxErr)
	return
}

//export phasebound_tables_free
func phasebound_tables_free(tables C.int64_t) (rc C.int) {
	var err error
	defer finish(&rc, &err)
	handleMu.Lock()
	th := tableSets[int64(tables)]
	delete(tableSets, int64(tables))
	handleMu.Unlock()
	if th == nil {
		err = fail(codeBadHandle, "table handle %d is not open", int64(tables))
	}
	return
}
