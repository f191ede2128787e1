/*
 * phasebound.h - C ABI of libphasebound, the phasebound client library for
 * simulation codes written in C, C++, Fortran (ISO_C_BINDING) or anything
 * that can call C.
 *
 * Build:   go build -buildmode=c-shared -o libphasebound.so ./clients/capi
 *          (make clients does it and runs the examples).
 * Link:    cc solver.c -I clients/capi -L DIR -lphasebound
 *
 * Two ways to get phase-boundary values:
 *
 *   1. Through the server: phasebound_evaluate sends a batch (any size) and
 *      receives P(T) or T(P), slopes dP/dT, per-point status codes and, on
 *      request, latent heats. The exact path (the correlation in its
 *      backend plugin) is one flag away.
 *
 *   2. Locally, the fast path for CFD: phasebound_tables_fetch downloads a
 *      substance's compiled tables once; phasebound_tables_evaluate then
 *      evaluates them in this process at in-process speed, with the same
 *      branch choice and the same values as the server's table path.
 *      phasebound_tables_refresh checks the server's catalog version and
 *      reloads the tables when it changed.
 *
 * Units are SI throughout: K, Pa, Pa/K, J/kg.
 *
 * Errors: every function returns PHASEBOUND_OK (0) or a positive
 * phasebound_code; phasebound_last_error() then returns a message naming
 * the problem (and the valid choices or range). The message is
 * thread-local: it belongs to the calling thread and stays valid until
 * that thread's next call into the library. The library never aborts the
 * host program: bad pointers (NULL), bad lengths and internal failures are
 * reported as codes.
 *
 * Threads: handles are safe to use from many threads at once (OpenMP
 * parallel loops over cells): evaluation only reads the tables, and
 * phasebound_tables_refresh swaps in new tables atomically, so a
 * concurrent evaluation sees either the old or the new tables, never a
 * mix. Free a handle only when no other thread uses it.
 *
 * CAUTION: values are only as good as the correlation behind each curve
 * (see 'phasebound substances' for validity ranges, uncertainties and
 * sources). They are not a substitute for design codes: designs must
 * follow the applicable local codes and be checked by a licensed engineer.
 */
#ifndef PHASEBOUND_H
#define PHASEBOUND_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Handles are opaque positive integers; 0 is never a valid handle. */
typedef int64_t phasebound_client;
typedef int64_t phasebound_tables;

/* Return codes. */
enum phasebound_code {
	PHASEBOUND_OK = 0,
	/* A bad argument: NULL pointer, negative or oversized length, unknown
	   curve kind or variable, unknown substance or branch. */
	PHASEBOUND_ERR_INVALID_ARGUMENT = 1,
	/* The handle is not (or no longer) valid. */
	PHASEBOUND_ERR_BAD_HANDLE = 2,
	/* The server could not be reached or refused the call (unavailable,
	   unauthenticated, resource exhausted, deadline exceeded). */
	PHASEBOUND_ERR_SERVER = 3,
	/* The call succeeded but some points failed: see their status codes;
	   the message names the first failure and the count. */
	PHASEBOUND_ERR_POINTS = 4,
	/* The output buffer is too small (version strings). */
	PHASEBOUND_ERR_BUFFER = 5,
	/* An internal error was caught at the library boundary. */
	PHASEBOUND_ERR_INTERNAL = 6
};

/* Curve kinds (values of phasebound.v1.CurveKind). */
enum phasebound_curve {
	PHASEBOUND_SATURATION = 1, /* liquid-vapour */
	PHASEBOUND_MELTING = 2,    /* solid-liquid */
	PHASEBOUND_SUBLIMATION = 3,/* solid-vapour */
	PHASEBOUND_TRANSITION = 4  /* solid-solid */
};

/* What the input values are (values of phasebound.v1.Variable). */
enum phasebound_given {
	PHASEBOUND_GIVEN_TEMPERATURE = 1, /* values in K; answer P(T) */
	PHASEBOUND_GIVEN_PRESSURE = 2     /* values in Pa; answer T(P) */
};

/* Flags of phasebound_evaluate. */
enum phasebound_flag {
	/* Evaluate through the backend correlation instead of the tables. */
	PHASEBOUND_EXACT = 1,
	/* Evaluate outside the validity range (status EXTRAPOLATED). */
	PHASEBOUND_ALLOW_EXTRAPOLATION = 2
};

/* Per-point status codes (values of phasebound.v1.PointStatus, plus
   NEEDS_SERVER for local evaluation). Failed points have NaN outputs. */
enum phasebound_status {
	PHASEBOUND_POINT_OK = 1,
	PHASEBOUND_POINT_INVALID = 2,       /* NaN, infinite or not positive */
	PHASEBOUND_POINT_OUT_OF_RANGE = 3,  /* outside every branch's range */
	PHASEBOUND_POINT_AMBIGUOUS_BRANCH = 4, /* several branches: name one */
	PHASEBOUND_POINT_EXTRAPOLATED = 5,  /* outside the range, as asked */
	PHASEBOUND_POINT_UNAVAILABLE = 6,   /* backend restarting: retry */
	/* Local tables only: the point needs the server (T(P) on a branch
	   whose pressure turns back has no table; ask phasebound_evaluate). */
	PHASEBOUND_POINT_NEEDS_SERVER = 7
};

/* phasebound_last_error returns the calling thread's message of its last
   failed call ("" after a successful one). Never NULL. */
const char *phasebound_last_error(void);

/* phasebound_connect prepares a connection to address ("host:port", a
   comma-separated list of them, or "dns:///name:port"). token_file names a
   file holding a bearer token; tls_ca turns TLS on (PEM CA bundle);
   tls_cert and tls_key add a client certificate for mutual TLS. Any of the
   four may be NULL or "". The connection is made lazily by the first call.
   On success *out holds the handle. */
int phasebound_connect(const char *address, const char *token_file, const char *tls_ca,
                       const char *tls_cert, const char *tls_key, phasebound_client *out);

/* phasebound_close releases a client. Table handles fetched through it
   keep working for local evaluation but can no longer refresh. */
int phasebound_close(phasebound_client client);

/* phasebound_catalog_version writes the server's catalog version (a
   SHA-256 in hex) as a NUL-terminated string into buf (65 bytes suffice). */
int phasebound_catalog_version(phasebound_client client, char *buf, size_t len);

/* phasebound_evaluate evaluates n points on one curve of a substance
   through the server. branch may be NULL or "" (the branch is then chosen
   per point by the value; a P(T) that matches several branches is an
   AMBIGUOUS_BRANCH point). flags is a combination of phasebound_flag.
   Every output array has n elements and may be NULL when not wanted;
   latent_heat_j_per_kg non-NULL also requests latent heats (NaN where the
   curve gives none). Returns PHASEBOUND_OK when every point is OK or
   EXTRAPOLATED, PHASEBOUND_ERR_POINTS when some failed. */
int phasebound_evaluate(phasebound_client client, const char *substance, int curve, const char *branch,
                        int given, const double *values, size_t n, int flags,
                        double *temperature_k, double *pressure_pa, double *dpdt_pa_per_k,
                        int32_t *status, double *latent_heat_j_per_kg);

/* phasebound_tables_fetch downloads the compiled tables of a substance
   (every curve and branch, with phase volumes) and returns a handle for
   local evaluation. */
int phasebound_tables_fetch(phasebound_client client, const char *substance, phasebound_tables *out);

/* phasebound_tables_evaluate is phasebound_evaluate on the local tables:
   same arguments (without flags), same branch choice, same values as the
   server's table path. It never contacts the server. */
int phasebound_tables_evaluate(phasebound_tables tables, int curve, const char *branch, int given,
                               const double *values, size_t n,
                               double *temperature_k, double *pressure_pa, double *dpdt_pa_per_k,
                               int32_t *status, double *latent_heat_j_per_kg);

/* phasebound_tables_refresh asks the server for its catalog version and,
   when it differs from the tables', fetches the new tables and swaps them
   in atomically. *changed (may be NULL) is set to 1 when it did, else 0.
   On failure the old tables stay in use. */
int phasebound_tables_refresh(phasebound_tables tables, int *changed);

/* phasebound_tables_version writes the catalog version the tables came
   from, as phasebound_catalog_version does. */
int phasebound_tables_version(phasebound_tables tables, char *buf, size_t len);

/* phasebound_tables_max_rel_error sets *out to the largest relative error
   the server measured for any of the substance's P(T) and T(P) tables
   against its correlation (the table tolerance actually reached). */
int phasebound_tables_max_rel_error(phasebound_tables tables, double *out);

/* phasebound_tables_free releases a table handle. */
int phasebound_tables_free(phasebound_tables tables);

#ifdef __cplusplus
}
#endif

#endif /* PHASEBOUND_H */
