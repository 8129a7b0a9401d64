! AFTER: the legacy heat code of heat_picard.f90 handed to nkit. The body of
! the Picard loop moved, unchanged, into the module subroutine one_pass (the
! fixed-point map G); the loop itself became a call to nkit. See
! docs/migration.md for the diff and when to choose which method.
!
!   heat_nkit_fortran [--cells=64] [--method=anderson] [--help]
!   (--method: anderson or newton_krylov_on_fixed_point_map)
module heat_model
  implicit none
  integer, parameter :: dp = kind(1.0d0)
  integer, parameter :: sweeps = 4
  real(dp), parameter :: q = 10.0_dp, omega = 1.7_dp
  integer :: n
  real(dp) :: h
  real(dp), allocatable :: t(:, :), k(:, :)
contains
  ! G(T): one pass of the old loop. nkit hands the interior cells as a vector.
  subroutine one_pass(input, output, status)
    real(dp), intent(in) :: input(:)
    real(dp), intent(inout) :: output(:)
    integer, intent(inout) :: status
    integer :: i, j, sweep
    real(dp) :: east, west, north, south, diagonal, relaxed
    t(1:n, 1:n) = reshape(input, [n, n])
    ! ---- one Picard pass: freeze k, relax the linear problem --------------------
    k = 1.0_dp + t**2
    do sweep = 1, sweeps
      do j = 1, n
        do i = 1, n
          east = 0.5_dp*(k(i, j) + k(i + 1, j))
          west = 0.5_dp*(k(i, j) + k(i - 1, j))
          north = 0.5_dp*(k(i, j) + k(i, j + 1))
          south = 0.5_dp*(k(i, j) + k(i, j - 1))
          if (i == n) east = 2.0_dp*east
          if (i == 1) west = 2.0_dp*west
          if (j == n) north = 2.0_dp*north
          if (j == 1) south = 2.0_dp*south
          diagonal = east + west + north + south
          relaxed = (east*t(i + 1, j) + west*t(i - 1, j) + north*t(i, j + 1) + south*t(i, j - 1) + q*h*h)/diagonal
          t(i, j) = (1.0_dp - omega)*t(i, j) + omega*relaxed
        end do
      end do
    end do
    ! ---- end of the pass --------------------------------------------------------------
    output = reshape(t(1:n, 1:n), [n*n])
    if (.not. all(abs(output) < huge(1.0_dp))) status = 1
  end subroutine one_pass
end module heat_model

program heat_nkit
  use, intrinsic :: iso_c_binding, only: c_int64_t
  use nkit
  use heat_model
  use conduction_check
  implicit none
  real(dp), parameter :: tolerance = 1.0e-10_dp
  real(dp), allocatable :: state(:)
  integer(c_int64_t) :: passes
  character(len=64) :: argument, method
  integer :: a, read_status
  type(nkit_solver) :: solver
  integer :: status
  real(dp) :: relative

  n = 64
  method = 'anderson'
  do a = 1, command_argument_count()
    call get_command_argument(a, argument)
    if (argument(1:8) == '--cells=') then
      read (argument(9:), *, iostat=read_status) n
      if (read_status /= 0) n = 0
    else if (argument(1:9) == '--method=') then
      method = argument(10:)
    else if (argument == '--help') then
      print '(a)', 'usage: heat_nkit_fortran [--cells=64] [--method=anderson] [--help]'
      print '(a)', '  --cells=N      cells per side of the unit square (default 64, at least 2)'
      print '(a)', '  --method=NAME  anderson or newton_krylov_on_fixed_point_map (default anderson)'
      print '(a)', '  --help         this text'
      stop
    else
      print '(3a)', 'heat_nkit_fortran: unknown option ''', trim(argument), ''' (try --help)'
      error stop 2
    end if
  end do
  if (n < 2) then
    print '(a)', 'heat_nkit_fortran: --cells must be an integer of at least 2'
    error stop 2
  end if
  h = 1.0_dp/n
  allocate (t(0:n + 1, 0:n + 1), k(0:n + 1, 0:n + 1), state(n*n))
  t = 0.0_dp
  state = 0.0_dp

  status = solver%create()
  if (status == nkit_status_success) status = solver%set_text('method', method)
  if (status == nkit_status_success) status = solver%set_fixed_point_map(one_pass)
  if (status == nkit_status_success) status = solver%set_real('absolute_tolerance', tolerance)
  if (status == nkit_status_success) status = solver%set_real('relative_tolerance', 1.0e-14_dp)
  if (status == nkit_status_success) status = solver%set_integer('iteration_budget', 2000)
  if (status == nkit_status_success) status = solver%solve(state)
  if (status /= nkit_status_success) then
    print '(2a)', 'heat_nkit: ', nkit_error_message()
    stop 2
  end if
  status = solver%report_integer('residual_evaluations', passes)
  t(1:n, 1:n) = reshape(state, [n, n])
  relative = relative_conduction_residual(t, n, q)
  print '(5a,i0,a,i0,a,es10.3,a,f8.5)', 'heat_nkit: ', trim(method), ': ', solver%stop_reason(), ', n = ', n, &
    ', passes = ', passes, ', |R|/|R0| = ', relative, ', max T = ', maxval(t)
  status = solver%destroy()
  ! The fixed-point residual is small; the conduction residual must be too
  ! (|T - G(T)| <= 1e-10 in the 2-norm; R is G's change scaled by the
  ! diagonal, about 8 k, times h**2 / h**2: 1e-6 relative is generous).
  if (.not. (relative < 1.0e-6_dp)) stop 1
end program heat_nkit
