// Command capi is built with -buildmode=c-shared into libphasebound, the C ABI (phasebound.h) through which C, C++, Fortran and Python solvers query a phasebound server and evaluate its compiled tables locally.
package main
