package sdk_test

import (
	"context"
	"errors"
	"fmt"
	"log/slog"

	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/thermo"
)

// A third-party backend is a main package that serves its families; the
// catalog names the built executable with its SHA-256. (Not run here: Serve
// only works when a phasebound server starts the executable.)
func ExampleServe() {
	family, err := thermo.GetFamily("antoine") // or a thermo.Family of your own
	if err != nil {
		panic(err)
	}
	sdk.Serve(sdk.Backend{Name: "lab-fits", Version: "1.0.0", Families: []thermo.Family{family}})
}

// The server's side: start a backend, evaluate a batch, retry when the
// process died under the call. (Not run here: it starts processes.)
func ExampleHost() {
	h := sdk.NewHost(sdk.HostConfig{Logger: slog.Default()})
	defer h.Close()
	ctx := context.Background()
	if err := h.Start(ctx, sdk.BackendSpec{Name: "vapor"}); err != nil {
		fmt.Println(err)
		return
	}
	req := sdk.EvalRequest{
		Family: "iapws-if97", Tmin: 273.15, Tmax: 647.096,
		Op: sdk.OpPressure, Values: []float64{300, 373.15, 500},
	}
	res, err := h.Evaluate(ctx, "vapor", req)
	if errors.Is(err, sdk.ErrBackendUnavailable) {
		// The backend is being restarted: retry later, or elsewhere.
		return
	}
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, p := range res.Results {
		fmt.Printf("P(%g K) = %.6g Pa, dP/dT = %.6g Pa/K\n", req.Values[i], p, res.Derivatives[i])
	}
	for _, f := range res.Failures {
		fmt.Printf("point %d: %s: %s\n", f.Index, f.Kind, f.Message)
	}
}
