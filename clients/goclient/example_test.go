package goclient_test

import (
	"context"
	"fmt"

	"github.com/phasebound/phasebound/clients/goclient"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// Dial a server by address (here one on a loopback port) and evaluate the
// saturation pressure of water at 300 K.
func ExampleDial() {
	addr := tcpAddress()
	ctx := context.Background()
	c, err := goclient.Dial(ctx, addr, goclient.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	defer c.Close()
	resp, err := c.Evaluate(ctx, &pb.EvaluateRequest{
		Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: []float64{300},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("P(300 K) = %.6f kPa\n", resp.PressurePa[0]/1e3) // IAPWS-IF97: 3.53658941 kPa
	// Output:
	// P(300 K) = 3.536589 kPa
}

// Evaluate a batch: the melting temperature of ice at several pressures,
// each point with its branch (the ice form) and status.
func ExampleClient_Evaluate() {
	c := inMemoryClient()
	defer c.Close()
	resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: pb.CurveKind_CURVE_KIND_MELTING,
		Given: pb.Variable_VARIABLE_PRESSURE, Values: []float64{0.1e6, 100e6, 200e6, 250e6, -1},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, st := range resp.Status {
		if st != pb.PointStatus_POINT_STATUS_OK {
			fmt.Printf("point %d: %v\n", i, st)
			continue
		}
		fmt.Printf("%5.1f MPa: %.2f K on %s\n", resp.PressurePa[i]/1e6, resp.TemperatureK[i], resp.BranchNames[resp.BranchIndex[i]])
	}
	// Output:
	//   0.1 MPa: 273.15 K on ice-Ih
	// 100.0 MPa: 264.21 K on ice-Ih
	// 200.0 MPa: 252.32 K on ice-Ih
	// 250.0 MPa: 253.30 K on ice-III
	// point 4: POINT_STATUS_INVALID
}

// EvaluateAll takes batches of any size: above ChunkPoints it streams them
// in chunks and reassembles the answers in order.
func ExampleClient_EvaluateAll() {
	c := inMemoryClient()
	defer c.Close()
	c.ChunkPoints = 1000
	temps := make([]float64, 2500)
	for i := range temps {
		temps[i] = 275 + 0.025*float64(i)
	}
	resp, err := c.EvaluateAll(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
		Given: pb.Variable_VARIABLE_TEMPERATURE, Values: temps,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d points; P(%.1f K) = %.6f kPa\n", len(resp.PressurePa), resp.TemperatureK[1000], resp.PressurePa[1000]/1e3) // IAPWS-IF97: 3.53658941 kPa
	// Output:
	// 2500 points; P(300.0 K) = 3.536589 kPa
}

// LocatePhase tells the phase of states: a product under pressure stays
// liquid where it would freeze at atmospheric pressure.
func ExampleClient_LocatePhase() {
	c := inMemoryClient()
	defer c.Close()
	resp, err := c.LocatePhase(context.Background(), &pb.LocatePhaseRequest{
		Substance:    "water",
		TemperatureK: []float64{258.15, 258.15},
		PressurePa:   []float64{101325, 200e6},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, ph := range resp.Phase {
		fmt.Printf("%v %q, %.2f K from %s\n", ph, resp.FormNames[resp.FormIndex[i]], resp.MarginTemperatureK[i],
			resp.BoundaryNames[resp.NearestBoundaryIndex[i]])
	}
	// Output:
	// PHASE_SOLID "ice-Ih", 15.00 K from melting/ice-Ih
	// PHASE_LIQUID "", 5.83 K from melting/ice-Ih
}

// ListSubstances and DescribeSubstance read the catalog the server serves.
func ExampleClient_DescribeSubstance() {
	c := inMemoryClient()
	defer c.Close()
	d, err := c.DescribeSubstance(context.Background(), "water")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, cv := range d.Substance.Curves {
		fmt.Printf("%v:", cv.Kind)
		for _, b := range cv.Branches {
			fmt.Printf(" %s[%g-%g K]", b.Family, b.Validity.MinTemperatureK, b.Validity.MaxTemperatureK)
		}
		fmt.Println()
	}
	// Output:
	// CURVE_KIND_SATURATION: iapws-if97[273.15-647.096 K]
	// CURVE_KIND_MELTING: power-sum[251.165-273.16 K] power-sum[251.165-256.164 K] power-sum[256.164-273.31 K] power-sum[273.31-355 K] log-power-sum[355-715 K]
	// CURVE_KIND_SUBLIMATION: inverse-log-power-sum[50-273.16 K]
}

// ExportTables returns the compiled tables with their measured error, for
// evaluation in the client's own process.
func ExampleClient_ExportTables() {
	c := inMemoryClient()
	defer c.Close()
	exp, err := c.ExportTables(context.Background(), "water")
	if err != nil {
		fmt.Println(err)
		return
	}
	t := exp.Tables[0]
	fmt.Printf("%v P(T) over [%g, %g] K, max relative error below 1e-10: %v\n", t.Curve, t.Pressure.XMin, t.Pressure.XMax, t.Pressure.MaxRelError <= 1e-10)
	// Output:
	// CURVE_KIND_SATURATION P(T) over [273.15, 647.096] K, max relative error below 1e-10: true
}
