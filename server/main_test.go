package server

import (
	"context"
	"log/slog"
	"net"
	"os"
	"sync"
	"testing"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/test/bufconn"

	"github.com/phasebound/phasebound/plugins/sdk"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
)

// TestMain lets the test binary serve as the standard backends: the plugin
// host re-executes the running binary with "backend NAME".
func TestMain(m *testing.M) {
	if len(os.Args) == 3 && os.Args[1] == "backend" {
		sdk.Serve(sdk.MustStandard(os.Args[2]))
		return
	}
	code := m.Run()
	if sharedServer != nil {
		sharedServer.Close() // stops the backends and removes their socket folder
	}
	os.Exit(code)
}

// testCatalog is water as the IAPWS releases give it (coefficients from
// memory, each checked by the tests against the releases' own check
// values), with simple phase volumes on the saturation curve so that the
// latent-heat path is exercised: liquid at a constant 958.35 kg/m³ (density
// at 100 °C, common practice) and an ideal-gas vapour.
const testCatalog = `
format = 1

[[substance]]
id = "water"
name = "Water"
molar_mass = 0.018015268
critical = { temperature = 647.096, pressure = 22.064e6 }
provenance = { kind = "published", citation = "IAPWS-IF97 and IAPWS R14-08(2011)" }

  [[substance.triple]]
  phases = ["ice-Ih", "liquid", "vapor"]
  temperature = 273.16
  pressure = 611.657

  [[substance.curve]]
  kind = "saturation"
    [[substance.curve.branch]]
    family = "iapws-if97"
    t_min = 273.15
    t_max = 647.096
    uncertainty = "IAPWS-IF97 region 4"
    params = {}
    provenance = { kind = "published", citation = "IAPWS R7-97(2012)" }
    volume_low = { family = "linear-density", params = { rho0 = 958.35, t0 = 373.15, drho_dt = 0 } }
    volume_high = { family = "ideal-gas", params = {} }

  [[substance.curve]]
  kind = "melting"
    [[substance.curve.branch]]
    name = "ice-Ih"
    family = "power-sum"
    t_min = 251.165
    t_max = 273.16
    solid_form = "ice-Ih"
    params = { t_ref = 273.16, p_ref = 611.657, a = [-1195393.37, -80818.3159, -3338.2686], b = [3.0, 25.75, 103.75] }
    provenance = { kind = "published", citation = "IAPWS R14-08(2011)" }
    [[substance.curve.branch]]
    name = "ice-III"
    family = "power-sum"
    t_min = 251.165
    t_max = 256.164
    solid_form = "ice-III"
    params = { t_ref = 251.165, p_ref = 208.566e6, a = [0.299948], b = [60.0] }
    provenance = { kind = "published", citation = "IAPWS R14-08(2011)" }

  [[substance.curve]]
  kind = "sublimation"
    [[substance.curve.branch]]
    name = "ice-Ih"
    family = "inverse-log-power-sum"
    t_min = 50.0
    t_max = 273.16
    solid_form = "ice-Ih"
    params = { t_ref = 273.16, p_ref = 611.657, a = [-21.2144006, 27.3203819, -6.1059813], b = [0.00333333333, 1.20666667, 1.70333333] }
    provenance = { kind = "published", citation = "IAPWS R14-08(2011)" }
`

var (
	sharedOnce   sync.Once
	sharedServer *Server
	sharedClient phaseboundpb.BoundaryServiceClient
	sharedConn   *grpc.ClientConn
	sharedErr    error
)

// testServer returns a Server on the test catalog, served over bufconn,
// shared by the tests of this package (its backends are real processes).
func testServer(t testing.TB) (*Server, phaseboundpb.BoundaryServiceClient, *grpc.ClientConn) {
	t.Helper()
	sharedOnce.Do(func() {
		cat, err := catalog.Parse("test.toml", []byte(testCatalog))
		if err != nil {
			sharedErr = err
			return
		}
		log := slog.New(slog.NewTextHandler(os.Stderr, &slog.HandlerOptions{Level: slog.LevelWarn}))
		srv, err := New(context.Background(), cat, Options{Logger: log, MaxPointsPerRequest: 2_000_000})
		if err != nil {
			sharedErr = err
			return
		}
		sharedServer = srv
		sharedConn, sharedErr = dialServer(srv)
		if sharedErr == nil {
			sharedClient = phaseboundpb.NewBoundaryServiceClient(sharedConn)
		}
	})
	if sharedErr != nil {
		t.Fatalf("test server: %v", sharedErr)
	}
	return sharedServer, sharedClient, sharedConn
}

// dialServer serves srv on a fresh bufconn listener and dials it.
func dialServer(srv *Server) (*grpc.ClientConn, error) {
	lis := bufconn.Listen(1 << 20)
	g := grpc.NewServer(grpc.MaxRecvMsgSize(256<<20), grpc.MaxSendMsgSize(256<<20))
	srv.Register(g)
	go g.Serve(lis)
	return grpc.NewClient("passthrough:///bufnet",
		grpc.WithContextDialer(func(ctx context.Context, _ string) (net.Conn, error) { return lis.DialContext(ctx) }),
		grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(256<<20), grpc.MaxCallSendMsgSize(256<<20)))
}
