#!/usr/bin/env bash
# Builds libphasebound (the C ABI, clients/capi) and the C, C++, Fortran and
# Python examples into out/clients, then runs every example against
# $PHASEBOUND_SERVER, or, when it is unset, against a server this script
# starts on loopback with the embedded catalog and stops at the end. Each
# example checks its values and exits non-zero on a mismatch.
set -euo pipefail
cd "$(dirname "$0")/.."
GO=${GO:-go}
CC=${CC:-gcc}
CXX=${CXX:-g++}
FC=${FC:-gfortran}
PYTHON=${PYTHON:-/usr/bin/python3}
out=out/clients
mkdir -p "$out/py"

echo "clients: building libphasebound.so"
"$GO" build -buildmode=c-shared -o "$out/libphasebound.so" ./clients/capi
inc="-I clients/capi"
lib="-L $out -Wl,-rpath,$PWD/$out -lphasebound"
openmp=""
if echo 'int main(void){return 0;}' | "$CC" -fopenmp -x c - -o "$out/.omp-probe" 2>/dev/null; then openmp="-fopenmp"; fi
rm -f "$out/.omp-probe"
echo "clients: building the C${openmp:+ (OpenMP)}, C++ and Fortran examples"
"$CC" -std=c11 -O2 -Wall -Wextra $openmp $inc clients/examples/c/example.c -o "$out/example_c" $lib -lm
"$CXX" -std=c++17 -O2 -Wall -Wextra $inc clients/examples/cpp/example.cpp -o "$out/example_cpp" $lib
"$FC" -O2 -Wall -J "$out" clients/examples/fortran/example.f90 -o "$out/example_fortran" $lib
echo "clients: generating the Python stubs"
"$PYTHON" -m grpc_tools.protoc -I proto --python_out="$out/py" --grpc_python_out="$out/py" proto/phasebound/v1/phasebound.proto

server=${PHASEBOUND_SERVER:-}
if [ -z "$server" ]; then
  bin=bin/phasebound
  [ -x "$bin" ] || "$GO" build -o "$bin" ./cmd/phasebound
  # Port 0: the kernel picks a free loopback port; serve prints it.
  log=$(mktemp)
  addrfile=$(mktemp)
  "$bin" serve --listen "${PHASEBOUND_CLIENTS_ADDR:-127.0.0.1:0}" >"$addrfile" 2>"$log" &
  pid=$!
  cleanup() { kill -TERM "$pid" 2>/dev/null || true; wait "$pid" 2>/dev/null || true; rm -f "$log" "$addrfile"; }
  trap cleanup EXIT
  echo "clients: starting a server on loopback"
  server=""
  for _ in $(seq 1 1200); do
    server=$(sed -n 's/^phasebound serving on //p' "$addrfile" | head -n 1)
    if [ -n "$server" ] && "$bin" substances --server "$server" >/dev/null 2>&1; then break; fi
    if ! kill -0 "$pid" 2>/dev/null; then echo "clients: the server did not start:" >&2; cat "$log" >&2; exit 1; fi
    sleep 0.1
  done
  if [ -z "$server" ]; then echo "clients: the server did not report its address:" >&2; cat "$log" >&2; exit 1; fi
fi
export PHASEBOUND_SERVER=$server

status=0
run() {
  echo "== $1"
  if ! "${@:2}"; then echo "clients: $1 example FAILED" >&2; status=1; fi
}
run C "$out/example_c"
run C++ "$out/example_cpp"
run Fortran "$out/example_fortran"
run Python env PYTHONPATH="$PWD/$out/py" "$PYTHON" clients/examples/python/example.py
if [ "$status" -eq 0 ]; then echo "clients: every example passed against $server"; fi
exit "$status"
