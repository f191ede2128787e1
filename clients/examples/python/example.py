#!/usr/bin/python3
"""Python example: query a phasebound server with grpcio.

The stubs are generated at build time (scripts/clients.sh runs
grpc_tools.protoc on proto/phasebound/v1/phasebound.proto into a build
directory on PYTHONPATH); nothing generated is checked in.

Checks IAPWS-IF97 values through the table and exact paths, a batch with a
bad point (per-point statuses), a batch of good points (which may come
back in the compact form: no statuses when every point is OK on one
branch), latent heats and a bad request (a gRPC
error with a clear message). Exits non-zero on a mismatch.
Usage: PHASEBOUND_SERVER=127.0.0.1:50051 python3 example.py
"""
import math
import os
import sys

import grpc

from phasebound.v1 import phasebound_pb2 as pb
from phasebound.v1 import phasebound_pb2_grpc as pb_grpc

failures = 0


def expect(what, got, want, rel_tol):
    global failures
    rel = abs(got - want) / abs(want)
    if not rel <= rel_tol:
        print(f"FAIL {what}: got {got!r}, want {want!r} (relative difference {rel:.3g})", file=sys.stderr)
        failures += 1
    else:
        print(f"ok   {what}: {got:.12g}")


def statuses(r):
    """One status per point. The server answers a batch whose points are
    all OK on one branch in a compact form: status and branch_index empty,
    branch_names[0] the branch. Otherwise status has an entry per point."""
    if len(r.status) == 0:
        return [pb.POINT_STATUS_OK] * len(r.pressure_pa)
    return list(r.status)


def branch(r, i):
    """The name of the branch point i of r was evaluated on."""
    if len(r.branch_index) == 0:
        return r.branch_names[0]
    return r.branch_names[r.branch_index[i]]


def main():
    global failures
    addr = os.environ.get("PHASEBOUND_SERVER")
    if not addr:
        print("set PHASEBOUND_SERVER to the server's HOST:PORT", file=sys.stderr)
        return 2
    metadata = []
    token_file = os.environ.get("PHASEBOUND_TOKEN_FILE")
    if token_file:
        with open(token_file) as f:
            metadata.append(("authorization", "Bearer " + f.read().strip()))
    with grpc.insecure_channel(addr) as channel:
        stub = pb_grpc.BoundaryServiceStub(channel)

        def evaluate(**kw):
            return stub.Evaluate(pb.EvaluateRequest(**kw), metadata=metadata, timeout=30)

        sat = dict(substance="water", curve=pb.CURVE_KIND_SATURATION, given=pb.VARIABLE_TEMPERATURE)
        r = evaluate(values=[300.0], **sat)
        expect("Psat(300 K) [Pa], table path", r.pressure_pa[0], 3536.58941, 1e-8)  # IAPWS R7-97(2012) IF97, Table 35 check value (from memory)
        r = evaluate(values=[300.0], exact=True, **sat)
        expect("Psat(300 K) [Pa], exact path", r.pressure_pa[0], 3536.58941, 1e-8)  # IAPWS R7-97(2012) IF97, Table 35 check value (from memory)
        r = evaluate(substance="water", curve=pb.CURVE_KIND_SATURATION, given=pb.VARIABLE_PRESSURE, values=[0.1e6])
        expect("Tsat(0.1 MPa) [K]", r.temperature_k[0], 372.755919, 1e-8)  # IAPWS R7-97(2012) IF97, Table 36 check value (from memory)

        # A batch with latent heats, and a bad point among good ones.
        r = evaluate(values=[373.124, 400.0, -1.0], include_latent_heat=True, **sat)
        expect("latent heat at 373.124 K [J/kg]", r.latent_heat_j_per_kg[0], 2257e3, 3e-3)  # about 2257 kJ/kg at the normal boiling point, common practice
        if statuses(r) != [pb.POINT_STATUS_OK, pb.POINT_STATUS_OK, pb.POINT_STATUS_INVALID] or not math.isnan(r.pressure_pa[2]):
            print(f"FAIL statuses {statuses(r)}, want OK, OK, INVALID with NaN", file=sys.stderr)
            failures += 1
        else:
            print(f"ok   bad point reported per point: {r.errors[0].message}")

        # A batch of good points on one named branch: every status OK, on
        # that branch (in the compact form when the server sends it).
        r = evaluate(substance="water", curve=pb.CURVE_KIND_MELTING, branch="ice-Ih", given=pb.VARIABLE_TEMPERATURE,
                     values=[255.0, 260.0, 270.0])
        got = [(s, branch(r, i)) for i, s in enumerate(statuses(r))]
        if got != [(pb.POINT_STATUS_OK, "ice-Ih")] * 3 or len(r.errors) != 0:
            print(f"FAIL ice-Ih batch: statuses and branches {got}, errors {list(r.errors)}", file=sys.stderr)
            failures += 1
        else:
            form = "compact" if len(r.status) == 0 else "per point"
            print(f"ok   ice-Ih batch: 3 points OK on {branch(r, 0)} ({form} answer)")

        # A bad request is a gRPC error with a message naming the choices.
        try:
            evaluate(substance="unobtainium", curve=pb.CURVE_KIND_SATURATION, given=pb.VARIABLE_TEMPERATURE, values=[300.0])
            print("FAIL unknown substance accepted", file=sys.stderr)
            failures += 1
        except grpc.RpcError as e:
            if e.code() != grpc.StatusCode.INVALID_ARGUMENT and e.code() != grpc.StatusCode.NOT_FOUND:
                print(f"FAIL unknown substance: {e.code()}", file=sys.stderr)
                failures += 1
            else:
                print(f"ok   unknown substance: {e.code().name}: {e.details()}")

        # The tables a solver would evaluate locally.
        t = stub.ExportTables(pb.ExportTablesRequest(substance="water"), metadata=metadata, timeout=30)
        worst = max(bt.pressure.max_rel_error for bt in t.tables)
        print(f"ok   {len(t.tables)} branch tables exported, measured error at most {worst:.2g}")
        if not worst <= 1e-10:
            failures += 1
    if failures:
        print(f"Python example: {failures} checks failed", file=sys.stderr)
        return 1
    print("Python example: all checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
