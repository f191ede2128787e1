package e2e

import (
	"bufio"
	"bytes"
	"context"
	"io"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats/scalar"
	"google.golang.org/genproto/googleapis/rpc/errdetails"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	reflectionpb "google.golang.org/grpc/reflection/grpc_reflection_v1"
	"google.golang.org/grpc/status"

	"github.com/phasebound/phasebound/clients/goclient"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// repoRoot is the module root, one folder up from this package.
func repoRoot(t *testing.T) string {
	_, file, _, ok := runtime.Caller(0)
	if !ok {
		t.Fatal("cannot locate the test file")
	}
	return filepath.Dir(filepath.Dir(file))
}

// buildBinary builds cmd/phasebound into a temporary folder.
func buildBinary(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "phasebound")
	cmd := exec.Command("go", "build", "-o", bin, "./cmd/phasebound")
	cmd.Dir = repoRoot(t)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// startServer runs `phasebound serve --listen 127.0.0.1:0` and returns the
// process, the address it announced, and its stderr (complete once the
// process has exited).
func startServer(t *testing.T, bin string) (*exec.Cmd, string, *bytes.Buffer, chan error) {
	t.Helper()
	cmd := exec.Command(bin, "serve", "--listen", "127.0.0.1:0", "--drain-timeout", "5s")
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	exited := make(chan error, 1)
	addrc := make(chan string, 1)
	go func() {
		sc := bufio.NewScanner(stdout)
		for sc.Scan() {
			if a, ok := strings.CutPrefix(sc.Text(), "phasebound serving on "); ok {
				addrc <- a
			}
		}
		io.Copy(io.Discard, stdout)
		exited <- cmd.Wait()
	}()
	t.Cleanup(func() {
		if cmd.ProcessState == nil {
			cmd.Process.Kill()
		}
	})
	select {
	case a := <-addrc:
		return cmd, a, &stderr, exited
	case err := <-exited:
		t.Fatalf("serve exited before listening: %v\n%s", err, stderr.String())
	case <-time.After(90 * time.Second):
		t.Fatalf("serve did not announce its address within 90 s\n%s", stderr.String())
	}
	return nil, "", nil, nil
}

func TestEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and starts real processes")
	}
	bin := buildBinary(t)
	cmd, addr, stderr, exited := startServer(t, bin)
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()

	// A standard gRPC health probe, polled until SERVING (bounded).
	cc, err := grpc.NewClient(addr, grpc.WithTransportCredentials(insecure.NewCredentials()))
	if err != nil {
		t.Fatal(err)
	}
	defer cc.Close()
	health := healthpb.NewHealthClient(cc)
	// The bound (60 s) only ends a broken run; a loaded machine merely
	// makes the poll take longer.
	for end := time.Now().Add(time.Minute); ; {
		r, err := health.Check(ctx, &healthpb.HealthCheckRequest{Service: "phasebound.v1.BoundaryService"})
		if err == nil && r.Status == healthpb.HealthCheckResponse_SERVING {
			break
		}
		if time.Now().After(end) {
			t.Fatalf("health never SERVING within 60 s: %v %v", r, err)
		}
		time.Sleep(50 * time.Millisecond)
	}

	// Reflection lists the service, as grpcurl-style tools need.
	rc, err := reflectionpb.NewServerReflectionClient(cc).ServerReflectionInfo(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if err := rc.Send(&reflectionpb.ServerReflectionRequest{MessageRequest: &reflectionpb.ServerReflectionRequest_ListServices{}}); err != nil {
		t.Fatal(err)
	}
	lr, err := rc.Recv()
	if err != nil {
		t.Fatal(err)
	}
	var services []string
	for _, s := range lr.GetListServicesResponse().GetService() {
		services = append(services, s.Name)
	}
	if !strings.Contains(strings.Join(services, " "), "phasebound.v1.BoundaryService") {
		t.Errorf("reflection lists %v", services)
	}
	rc.CloseSend()

	c, err := goclient.Dial(ctx, addr, goclient.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()

	// The backends are real processes: every branch names the one that serves it.
	d, err := c.DescribeSubstance(ctx, "water")
	if err != nil {
		t.Fatal(err)
	}
	for _, cv := range d.Substance.Curves {
		for _, b := range cv.Branches {
			if b.Backend == "" || !(b.TableMaxRelError <= 1e-10) {
				t.Errorf("%v %s: backend %q, table error %g", cv.Kind, b.Name, b.Backend, b.TableMaxRelError)
			}
		}
	}

	// Single points against published check values.
	singles := []struct {
		curve  pb.CurveKind
		branch string
		given  pb.Variable
		x      float64
		want   float64
		rel    float64
	}{
		{pb.CurveKind_CURVE_KIND_SATURATION, "", pb.Variable_VARIABLE_TEMPERATURE, 300, 3.53658941e3, 1e-8},  // IAPWS-IF97, Table 35 check value
		{pb.CurveKind_CURVE_KIND_SATURATION, "", pb.Variable_VARIABLE_TEMPERATURE, 500, 2.63889776e6, 1e-8},  // IAPWS-IF97, Table 35 check value (from memory)
		{pb.CurveKind_CURVE_KIND_SATURATION, "", pb.Variable_VARIABLE_TEMPERATURE, 600, 1.23443146e7, 1e-8},  // IAPWS-IF97, Table 35 check value (from memory)
		{pb.CurveKind_CURVE_KIND_SATURATION, "", pb.Variable_VARIABLE_PRESSURE, 0.1e6, 372.755919, 1e-8},     // IAPWS-IF97, Table 36 check value (from memory)
		{pb.CurveKind_CURVE_KIND_SATURATION, "", pb.Variable_VARIABLE_PRESSURE, 10e6, 584.149488, 1e-8},      // IAPWS-IF97, Table 36 check value (from memory)
		{pb.CurveKind_CURVE_KIND_MELTING, "ice-Ih", pb.Variable_VARIABLE_TEMPERATURE, 260, 138.268e6, 1e-5},  // IAPWS R14-08(2011), Table 3 check value
		{pb.CurveKind_CURVE_KIND_MELTING, "ice-III", pb.Variable_VARIABLE_TEMPERATURE, 254, 268.685e6, 1e-5}, // IAPWS R14-08(2011), Table 3 check value
		{pb.CurveKind_CURVE_KIND_MELTING, "ice-V", pb.Variable_VARIABLE_TEMPERATURE, 265, 479.640e6, 1e-5},   // IAPWS R14-08(2011), Table 3 check value (from memory)
		{pb.CurveKind_CURVE_KIND_MELTING, "ice-VI", pb.Variable_VARIABLE_TEMPERATURE, 320, 1356.76e6, 1e-5},  // IAPWS R14-08(2011), Table 3 check value (from memory)
		{pb.CurveKind_CURVE_KIND_MELTING, "ice-VII", pb.Variable_VARIABLE_TEMPERATURE, 550, 6308.71e6, 1e-5}, // IAPWS R14-08(2011), Table 3 check value (from memory)
		{pb.CurveKind_CURVE_KIND_SUBLIMATION, "", pb.Variable_VARIABLE_TEMPERATURE, 230, 8.94735, 1e-5},      // IAPWS R14-08(2011), Table 3 check value
	}
	for _, s := range singles {
		for _, exact := range []bool{false, true} {
			r, err := c.Evaluate(ctx, &pb.EvaluateRequest{Substance: "water", Curve: s.curve, Branch: s.branch, Given: s.given,
				Values: []float64{s.x}, Exact: exact, Strict: true})
			if err != nil {
				t.Fatalf("%v %s at %g: %v", s.curve, s.branch, s.x, err)
			}
			got := r.PressurePa[0]
			if s.given == pb.Variable_VARIABLE_PRESSURE {
				got = r.TemperatureK[0]
			}
			if !scalar.EqualWithinAbsOrRel(got, s.want, 0, s.rel) {
				t.Errorf("%v %s at %g (exact %v): %.9g, want %.9g", s.curve, s.branch, s.x, exact, got, s.want)
			}
		}
	}

	// Latent heat by the Clapeyron equation where the catalog gives phase volumes.
	lh, err := c.Evaluate(ctx, &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: []float64{373.124}, IncludeLatentHeat: true, Strict: true})
	if err != nil {
		t.Fatal(err)
	}
	if lh.LatentHeatSource[0] == pb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON &&
		!scalar.EqualWithinAbsOrRel(lh.LatentHeatJPerKg[0], 2257e3, 0, 0.005) { // about 2257 kJ/kg at the normal boiling point, common practice
		t.Errorf("latent heat of vaporisation at 373.124 K: %g J/kg", lh.LatentHeatJPerKg[0])
	}

	// A batch beyond gRPC's default 4 MiB: 655,360 temperatures (5 MiB of
	// doubles), once in one unary call and once streamed in chunks.
	const n = 655_360
	temps := make([]float64, n)
	for i := range temps {
		temps[i] = 273.16 + (647.0-273.16)*float64(i)/(n-1)
	}
	for i, v := range []float64{300, 500, 600} {
		temps[1000+i*200_000] = v
	}
	req := &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: temps}
	unary, err := c.Evaluate(ctx, req)
	if err != nil {
		t.Fatalf("unary batch of %d points: %v", n, err)
	}
	all, err := c.EvaluateAll(ctx, req)
	if err != nil {
		t.Fatalf("streamed batch of %d points: %v", n, err)
	}
	if len(all.PressurePa) != n || len(unary.PressurePa) != n {
		t.Fatalf("batch answers %d and %d points, want %d", len(unary.PressurePa), len(all.PressurePa), n)
	}
	want := []float64{3.53658941e3, 2.63889776e6, 1.23443146e7} // IAPWS-IF97 check values at 300 K (brief) and at 500, 600 K (from memory)
	for i, w := range want {
		k := 1000 + i*200_000
		if !scalar.EqualWithinAbsOrRel(all.PressurePa[k], w, 0, 1e-8) || all.PressurePa[k] != unary.PressurePa[k] {
			t.Errorf("batch point %d (%g K): streamed %.9g, unary %.9g, want %.9g", k, temps[k], all.PressurePa[k], unary.PressurePa[k], w)
		}
	}
	for i := range temps {
		if all.Status[i] != pb.PointStatus_POINT_STATUS_OK || all.PressurePa[i] != unary.PressurePa[i] {
			t.Fatalf("batch point %d: status %v, %g vs %g", i, all.Status[i], all.PressurePa[i], unary.PressurePa[i])
		}
	}

	// Errors are gRPC statuses with details.
	_, err = c.Evaluate(ctx, &pb.EvaluateRequest{Substance: "unobtainium", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: []float64{300}})
	checkBadRequest(t, err, codes.InvalidArgument, "substance", "water")
	_, err = c.Evaluate(ctx, &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: []float64{300, 1000}, Strict: true})
	checkBadRequest(t, err, codes.OutOfRange, "values[1]", "647.096")
	_, err = c.Evaluate(ctx, &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_MELTING,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: []float64{254}, Strict: true})
	checkBadRequest(t, err, codes.InvalidArgument, "values[0]", "ice-III")

	// SIGTERM drains and stops cleanly.
	if err := cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	select {
	case err := <-exited:
		if err != nil {
			t.Fatalf("serve exited with %v after SIGTERM\n%s", err, stderr.String())
		}
	case <-time.After(30 * time.Second):
		t.Fatalf("serve did not stop within 30 s of SIGTERM\n%s", stderr.String())
	}
	if !strings.Contains(stderr.String(), "stopped cleanly") {
		t.Errorf("serve log lacks a clean stop:\n%s", stderr.String())
	}
	if strings.Contains(stderr.String(), "panic") {
		t.Errorf("serve log mentions a panic:\n%s", stderr.String())
	}
}

func checkBadRequest(t *testing.T, err error, code codes.Code, field, mention string) {
	t.Helper()
	st, ok := status.FromError(err)
	if !ok || st.Code() != code {
		t.Errorf("error %v, want %v", err, code)
		return
	}
	if !strings.Contains(st.Message(), mention) {
		t.Errorf("message %q does not mention %q", st.Message(), mention)
	}
	for _, d := range st.Details() {
		if br, ok := d.(*errdetails.BadRequest); ok && len(br.FieldViolations) > 0 && br.FieldViolations[0].Field == field {
			return
		}
	}
	t.Errorf("status %v lacks a BadRequest violation on %q", st.Proto(), field)
}
