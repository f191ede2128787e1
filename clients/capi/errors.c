// Thread-local last-error message of libphasebound: every API call
// clears or sets it on the calling thread, so OpenMP threads never see
// each other's messages.
#include <stddef.h>
#include <string.h>

#include "phasebound.h"

static __thread char pb_error[1024];

void pb_set_error(const char *msg, size_t n) {
	if (n >= sizeof pb_error) {
		n = sizeof pb_error - 1;
	}
	memcpy(pb_error, msg, n);
	pb_error[n] = '\0';
}

void pb_clear_error(void) { pb_error[0] = '\0'; }

const char *phasebound_last_error(void) { return pb_error; }
