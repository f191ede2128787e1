// Package bench measures phasebound's evaluation paths against their limits in one run: the correlation in-process, the compiled table in-process, batch and unary RPCs against the no-work Echo floor, the exact path through the backend plugin, the latent-heat path, and a bounded soak.
package bench
