! Fortran example of libphasebound through ISO_C_BINDING: fetch water's
! tables once, evaluate saturation pressure, slope and latent heat for an
! array of cells locally, and check one value against the server's exact
! path. Exits with status 1 on a mismatch.
! Usage: PHASEBOUND_SERVER=127.0.0.1:50051 ./example_fortran
module phasebound
  use, intrinsic :: iso_c_binding
  implicit none
  integer(c_int), parameter :: PB_OK = 0, PB_SATURATION = 1, PB_MELTING = 2
  integer(c_int), parameter :: PB_GIVEN_TEMPERATURE = 1, PB_GIVEN_PRESSURE = 2, PB_EXACT = 1
  interface
    function pb_connect(address, token_file, tls_ca, tls_cert, tls_key, out) bind(c, name="phasebound_connect")
      import :: c_int, c_int64_t, c_char, c_ptr
      character(kind=c_char), dimension(*), intent(in) :: address
      type(c_ptr), value :: token_file, tls_ca, tls_cert, tls_key
      integer(c_int64_t), intent(out) :: out
      integer(c_int) :: pb_connect
    end function
    function pb_close(client) bind(c, name="phasebound_close")
      import :: c_int, c_int64_t
      integer(c_int64_t), value :: client
      integer(c_int) :: pb_close
    end function
    function pb_tables_fetch(client, substance, out) bind(c, name="phasebound_tables_fetch")
      import :: c_int, c_int64_t, c_char
      integer(c_int64_t), value :: client
      character(kind=c_char), dimension(*), intent(in) :: substance
      integer(c_int64_t), intent(out) :: out
      integer(c_int) :: pb_tables_fetch
    end function
    function pb_tables_free(tables) bind(c, name="phasebound_tables_free")
      import :: c_int, c_int64_t
      integer(c_int64_t), value :: tables
      integer(c_int) :: pb_tables_free
    end function
    ! Output arrays are passed as c_ptr so that unwanted ones can be c_null_ptr.
    function pb_tables_evaluate(tables, curve, branch, given, values, n, t, p, dpdt, status, latent) &
        bind(c, name="phasebound_tables_evaluate")
      import :: c_int, c_int64_t, c_size_t, c_double, c_ptr
      integer(c_int64_t), value :: tables
      integer(c_int), value :: curve, given
      type(c_ptr), value :: branch
      real(c_double), dimension(*), intent(in) :: values
      integer(c_size_t), value :: n
      type(c_ptr), value :: t, p, dpdt, status, latent
      integer(c_int) :: pb_tables_evaluate
    end function
    function pb_evaluate(client, substance, curve, branch, given, values, n, flags, t, p, dpdt, status, latent) &
        bind(c, name="phasebound_evaluate")
      import :: c_int, c_int64_t, c_size_t, c_double, c_ptr, c_char
      integer(c_int64_t), value :: client
      character(kind=c_char), dimension(*), intent(in) :: substance
      integer(c_int), value :: curve, given, flags
      type(c_ptr), value :: branch
      real(c_double), dimension(*), intent(in) :: values
      integer(c_size_t), value :: n
      type(c_ptr), value :: t, p, dpdt, status, latent
      integer(c_int) :: pb_evaluate
    end function
    function pb_last_error() bind(c, name="phasebound_last_error")
      import :: c_ptr
      type(c_ptr) :: pb_last_error
    end function
    function c_strlen(s) bind(c, name="strlen")
      import :: c_ptr, c_size_t
      type(c_ptr), value :: s
      integer(c_size_t) :: c_strlen
    end function
  end interface
contains
  ! last_error returns the library's message for this thread's last call.
  function last_error() result(msg)
    character(len=:), allocatable :: msg
    character(kind=c_char), pointer :: chars(:)
    type(c_ptr) :: p
    integer :: i, n
    p = pb_last_error()
    n = int(c_strlen(p))
    call c_f_pointer(p, chars, [n])
    allocate(character(len=n) :: msg)
    do i = 1, n
      msg(i:i) = chars(i)
    end do
  end function
end module

program example
  use, intrinsic :: iso_c_binding
  use phasebound
  implicit none
  integer, parameter :: ncell = 1000
  integer(c_int64_t) :: client, water
  real(c_double), target :: tcell(ncell), pcell(ncell), dcell(ncell), hcell(ncell)
  real(c_double), target :: t300(1), pexact(1)
  integer(c_int32_t), target :: scell(ncell)
  character(len=256) :: addr
  integer :: i, alen, failures
  real(c_double) :: rel

  failures = 0
  call get_environment_variable("PHASEBOUND_SERVER", addr, alen)
  if (alen == 0) then
    print '(a)', "set PHASEBOUND_SERVER to the server's HOST:PORT"
    stop 2
  end if
  if (pb_connect(trim(addr)//c_null_char, c_null_ptr, c_null_ptr, c_null_ptr, c_null_ptr, client) /= PB_OK) then
    print '(2a)', "connect: ", last_error()
    stop 1
  end if
  if (pb_tables_fetch(client, "water"//c_null_char, water) /= PB_OK) then
    print '(2a)', "fetch tables: ", last_error()
    stop 1
  end if

  ! Cells between 280 K and 640 K: saturation pressure, slope, latent heat.
  do i = 1, ncell
    tcell(i) = 280.0d0 + 360.0d0 * (i - 0.5d0) / ncell
  end do
  if (pb_tables_evaluate(water, PB_SATURATION, c_null_ptr, PB_GIVEN_TEMPERATURE, tcell, int(ncell, c_size_t), &
      c_null_ptr, c_loc(pcell), c_loc(dcell), c_loc(scell), c_loc(hcell)) /= PB_OK) then
    print '(2a)', "FAIL local evaluation: ", last_error()
    failures = failures + 1
  end if
  if (any(scell /= 1) .or. any(dcell <= 0) .or. any(hcell <= 0)) then
    print '(a)', "FAIL some cells have a bad status, slope or latent heat"
    failures = failures + 1
  end if

  ! IAPWS-IF97 saturation pressure at 300 K, locally and exactly.
  t300(1) = 300.0d0
  if (pb_tables_evaluate(water, PB_SATURATION, c_null_ptr, PB_GIVEN_TEMPERATURE, t300, 1_c_size_t, &
      c_null_ptr, c_loc(pcell), c_null_ptr, c_null_ptr, c_null_ptr) /= PB_OK) then
    print '(2a)', "FAIL local P(300 K): ", last_error()
    failures = failures + 1
  end if
  rel = abs(pcell(1) - 3536.58941d0) / 3536.58941d0 ! IAPWS R7-97(2012) IF97, Table 35 check value (from memory)
  if (rel > 1d-8) then
    print '(a,es20.12)', "FAIL local Psat(300 K) = ", pcell(1)
    failures = failures + 1
  else
    print '(a,f16.8,a)', "ok   local Psat(300 K) = ", pcell(1), " Pa"
  end if
  if (pb_evaluate(client, "water"//c_null_char, PB_SATURATION, c_null_ptr, PB_GIVEN_TEMPERATURE, t300, 1_c_size_t, &
      PB_EXACT, c_null_ptr, c_loc(pexact), c_null_ptr, c_null_ptr, c_null_ptr) /= PB_OK) then
    print '(2a)', "FAIL exact P(300 K): ", last_error()
    failures = failures + 1
  end if
  rel = abs(pcell(1) - pexact(1)) / pexact(1)
  if (rel > 1d-10) then
    print '(a,es12.4)', "FAIL local table vs exact path, relative difference ", rel
    failures = failures + 1
  else
    print '(a,es10.2)', "ok   local table vs exact path, relative difference ", rel
  end if

  ! A bad point comes back as a code and a message.
  t300(1) = -5.0d0
  if (pb_tables_evaluate(water, PB_SATURATION, c_null_ptr, PB_GIVEN_TEMPERATURE, t300, 1_c_size_t, &
      c_null_ptr, c_loc(pcell), c_null_ptr, c_loc(scell), c_null_ptr) /= 4 .or. scell(1) /= 2) then
    print '(a)', "FAIL T = -5 K was not refused as an invalid point"
    failures = failures + 1
  else
    print '(2a)', "ok   T = -5 K refused: ", last_error()
  end if

  i = pb_tables_free(water)
  i = pb_close(client)
  if (failures > 0) then
    print '(a,i0,a)', "Fortran example: ", failures, " checks failed"
    stop 1
  end if
  print '(a)', "Fortran example: all checks passed"
end program
