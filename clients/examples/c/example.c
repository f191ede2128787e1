/*
 * C example of libphasebound: the CFD coupling pattern.
 *
 *   1. connect, fetch water's compiled tables once (start-up);
 *   2. evaluate saturation pressure, slope and latent heat per cell from
 *      the local tables, in parallel (OpenMP when compiled with -fopenmp);
 *   3. check a few cells through the server (table and exact paths);
 *   4. refresh the tables when the catalog changes.
 *
 * Every value is checked; the program exits non-zero on a mismatch.
 * Usage: PHASEBOUND_SERVER=127.0.0.1:50051 ./example_c
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "phasebound.h"

static int failures = 0;

static void check_close(const char *what, double got, double want, double rel_tol) {
	double rel = fabs(got - want) / fabs(want);
	if (!(rel <= rel_tol)) {
		fprintf(stderr, "FAIL %s: got %.12g, want %.12g (relative difference %.3g > %.3g)\n", what, got, want, rel, rel_tol);
		failures++;
	} else {
		printf("ok   %s: %.12g (relative difference %.2g)\n", what, got, rel);
	}
}

static void check_rc(const char *what, int rc, int want) {
	if (rc != want) {
		fprintf(stderr, "FAIL %s: return code %d, want %d (%s)\n", what, rc, want, phasebound_last_error());
		failures++;
	}
}

#define NCELLS 100000

int main(void) {
	const char *addr = getenv("PHASEBOUND_SERVER");
	if (addr == NULL || addr[0] == '\0') {
		fprintf(stderr, "set PHASEBOUND_SERVER to the server's HOST:PORT\n");
		return 2;
	}
	phasebound_client client = 0;
	if (phasebound_connect(addr, getenv("PHASEBOUND_TOKEN_FILE"), NULL, NULL, NULL, &client) != PHASEBOUND_OK) {
		fprintf(stderr, "connect: %s\n", phasebound_last_error());
		return 1;
	}

	/* Start-up: the substance's tables, once. */
	phasebound_tables water = 0;
	if (phasebound_tables_fetch(client, "water", &water) != PHASEBOUND_OK) {
		fprintf(stderr, "fetch tables: %s\n", phasebound_last_error());
		return 1;
	}
	double table_err = 0;
	check_rc("max_rel_error", phasebound_tables_max_rel_error(water, &table_err), PHASEBOUND_OK);
	char version[80];
	check_rc("tables_version", phasebound_tables_version(water, version, sizeof version), PHASEBOUND_OK);
	printf("tables of catalog %.12s..., measured table error %.2g\n", version, table_err);

	/* IAPWS-IF97 saturation pressure at 300 K, locally and through the server. */
	double t300 = 300.0, p = 0, dpdt = 0, h = 0;
	int32_t st = 0;
	check_rc("local P(300 K)", phasebound_tables_evaluate(water, PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                                      &t300, 1, NULL, &p, &dpdt, &st, &h), PHASEBOUND_OK);
	check_close("local Psat(300 K) [Pa]", p, 3536.58941, 1e-8); /* IAPWS R7-97(2012) IF97, Table 35 check value 0.353658941e-2 MPa (from memory) */
	double ps = 0;
	st = -1;
	check_rc("server P(300 K)", phasebound_evaluate(client, "water", PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                                &t300, 1, 0, NULL, &ps, NULL, &st, NULL), PHASEBOUND_OK);
	check_close("server Psat(300 K) [Pa]", ps, 3536.58941, 1e-8); /* IAPWS R7-97(2012) IF97, Table 35 check value (from memory) */
	/* The server answers an all-OK batch in its compact form (no statuses);
	   the library still gives one status per point. */
	if (st != PHASEBOUND_POINT_OK) {
		fprintf(stderr, "FAIL server P(300 K): status %d, want PHASEBOUND_POINT_OK\n", st);
		failures++;
	}
	check_rc("exact P(300 K)", phasebound_evaluate(client, "water", PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                               &t300, 1, PHASEBOUND_EXACT, NULL, &ps, NULL, NULL, NULL), PHASEBOUND_OK);
	check_close("exact Psat(300 K) [Pa]", ps, 3536.58941, 1e-8); /* IAPWS R7-97(2012) IF97, Table 35 check value (from memory) */

	/* Latent heat at the normal boiling point (Clapeyron with the catalog's phase volumes). */
	double tb = 373.124;
	check_rc("local latent heat", phasebound_tables_evaluate(water, PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                                         &tb, 1, NULL, NULL, NULL, NULL, &h), PHASEBOUND_OK);
	check_close("latent heat at 373.124 K [J/kg]", h, 2257e3, 3e-3); /* about 2257 kJ/kg at the normal boiling point, common practice */

	/* Per-cell evaluation: one saturation temperature per cell, evaluated
	   locally by many threads at once. */
	double *tc = malloc(NCELLS * sizeof *tc), *pl = malloc(NCELLS * sizeof *pl), *dl = malloc(NCELLS * sizeof *dl);
	double *hl = malloc(NCELLS * sizeof *hl), *pe = malloc(NCELLS * sizeof *pe), *pr = malloc(NCELLS * sizeof *pr);
	double *dr = malloc(NCELLS * sizeof *dr), *hr = malloc(NCELLS * sizeof *hr);
	int32_t *sl = malloc(NCELLS * sizeof *sl);
	if (!tc || !pl || !dl || !hl || !pe || !pr || !dr || !hr || !sl) {
		fprintf(stderr, "out of memory\n");
		return 1;
	}
	for (int i = 0; i < NCELLS; i++) {
		tc[i] = 273.16 + (640.0 - 273.16) * (i + 0.5) / NCELLS;
	}
	int bad_chunks = 0;
	const int chunk = 1000;
#pragma omp parallel for schedule(dynamic) reduction(+ : bad_chunks)
	for (int lo = 0; lo < NCELLS; lo += chunk) {
		if (phasebound_tables_evaluate(water, PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE, tc + lo, chunk,
		                               NULL, pl + lo, dl + lo, sl + lo, hl + lo) != PHASEBOUND_OK) {
			bad_chunks++;
		}
	}
	if (bad_chunks) {
		fprintf(stderr, "FAIL parallel local evaluation: %d chunks failed\n", bad_chunks);
		failures++;
	}

	/* Check the local tables against the server: its table path must give
	   the same numbers, its exact path (the correlation in the backend)
	   must agree to the table tolerance. */
	check_rc("server table path", phasebound_evaluate(client, "water", PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                                  tc, NCELLS, 0, NULL, pr, dr, NULL, hr), PHASEBOUND_OK);
	check_rc("server exact path", phasebound_evaluate(client, "water", PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                                  tc, NCELLS, PHASEBOUND_EXACT, NULL, pe, NULL, NULL, NULL), PHASEBOUND_OK);
	double worst_same = 0, worst_exact = 0;
	for (int i = 0; i < NCELLS; i++) {
		double d1 = fabs(pl[i] - pr[i]) / pr[i], d2 = fabs(dl[i] - dr[i]) / fabs(dr[i]), d3 = fabs(hl[i] - hr[i]) / fabs(hr[i]);
		double d4 = fabs(pl[i] - pe[i]) / pe[i];
		if (d1 > worst_same) worst_same = d1;
		if (d2 > worst_same) worst_same = d2;
		if (d3 > worst_same) worst_same = d3;
		if (d4 > worst_exact) worst_exact = d4;
		if (sl[i] != PHASEBOUND_POINT_OK) {
			fprintf(stderr, "FAIL cell %d: status %d\n", i, sl[i]);
			failures++;
			break;
		}
	}
	printf("local vs server table path: max relative difference %.3g over %d cells (P, dP/dT, latent heat)\n", worst_same, NCELLS);
	printf("local vs server exact path: max relative difference %.3g (table tolerance 1e-10)\n", worst_exact);
	if (worst_same > 1e-15) {
		fprintf(stderr, "FAIL local tables differ from the server's table path\n");
		failures++;
	}
	if (!(worst_exact <= 1e-10)) {
		fprintf(stderr, "FAIL local tables differ from the exact correlation by more than the table tolerance 1e-10\n");
		failures++;
	}

	/* A multi-branch curve: ice Ih melting pressure at 260 K. */
	double t260 = 260.0, pm_local = 0, pm_server = 0;
	check_rc("local ice-Ih", phasebound_tables_evaluate(water, PHASEBOUND_MELTING, "ice-Ih", PHASEBOUND_GIVEN_TEMPERATURE,
	                                                    &t260, 1, NULL, &pm_local, NULL, NULL, NULL), PHASEBOUND_OK);
	check_rc("server ice-Ih", phasebound_evaluate(client, "water", PHASEBOUND_MELTING, "ice-Ih", PHASEBOUND_GIVEN_TEMPERATURE,
	                                              &t260, 1, PHASEBOUND_EXACT, NULL, &pm_server, NULL, NULL, NULL), PHASEBOUND_OK);
	check_close("ice-Ih melting pressure at 260 K, local vs exact [Pa]", pm_local, pm_server, 1e-10);

	/* Errors are codes and messages, never a crash. */
	double t254 = 254.0;
	int rc = phasebound_tables_evaluate(water, PHASEBOUND_MELTING, NULL, PHASEBOUND_GIVEN_TEMPERATURE, &t254, 1, NULL, &p, NULL, &st, NULL);
	check_rc("ambiguous branch", rc, PHASEBOUND_ERR_POINTS);
	if (st != PHASEBOUND_POINT_AMBIGUOUS_BRANCH || !isnan(p)) {
		fprintf(stderr, "FAIL 254 K on the melting curve: status %d, P %g (want AMBIGUOUS_BRANCH and NaN)\n", st, p);
		failures++;
	}
	printf("ok   254 K on water's melting curve: %s\n", phasebound_last_error());
	double t1000 = 1000.0;
	rc = phasebound_tables_evaluate(water, PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE, &t1000, 1, NULL, &p, NULL, &st, NULL);
	check_rc("out of range", rc, PHASEBOUND_ERR_POINTS);
	if (st != PHASEBOUND_POINT_OUT_OF_RANGE) {
		fprintf(stderr, "FAIL 1000 K: status %d, want OUT_OF_RANGE\n", st);
		failures++;
	}
	check_rc("unknown substance", phasebound_evaluate(client, "unobtainium", PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE,
	                                                  &t300, 1, 0, NULL, &p, NULL, NULL, NULL), PHASEBOUND_ERR_INVALID_ARGUMENT);
	printf("ok   unknown substance: %s\n", phasebound_last_error());
	check_rc("NULL values", phasebound_tables_evaluate(water, PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE, NULL, 5,
	                                                   NULL, &p, NULL, NULL, NULL), PHASEBOUND_ERR_INVALID_ARGUMENT);
	check_rc("bad handle", phasebound_tables_evaluate(987654, PHASEBOUND_SATURATION, NULL, PHASEBOUND_GIVEN_TEMPERATURE, &t300, 1,
	                                                  NULL, &p, NULL, NULL, NULL), PHASEBOUND_ERR_BAD_HANDLE);

	/* Refresh: nothing changed, so nothing is reloaded. */
	int changed = -1;
	check_rc("refresh", phasebound_tables_refresh(water, &changed), PHASEBOUND_OK);
	if (changed != 0) {
		fprintf(stderr, "FAIL refresh reported a change on an unchanged catalog\n");
		failures++;
	}

	phasebound_tables_free(water);
	phasebound_close(client);
	free(tc); free(pl); free(dl); free(hl); free(pe); free(pr); free(dr); free(hr); free(sl);
	if (failures) {
		fprintf(stderr, "C example: %d checks failed\n", failures);
		return 1;
	}
	printf("C example: all checks passed\n");
	return 0;
}
