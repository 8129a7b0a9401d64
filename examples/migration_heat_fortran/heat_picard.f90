! BEFORE: a legacy-style 2-D heat code with a hand-rolled Picard loop (the
! starting point of the Fortran migration in docs/migration.md; its nkit
! version is heat_nkit.f90, a small diff away).
!
! Steady nonlinear conduction -div(k(T) grad T) = q on the unit square,
! k(T) = 1 + T**2, q = 10, T = 0 on the walls: the project's model problem
! (cell-centred finite volumes on n x n cells, face conductivity the mean of
! the two cell values, wall faces at distance h/2). Each Picard pass freezes
! k at the current T and relaxes the linear problem by a fixed number of SOR
! sweeps; the loop stops when a pass changes T by less than the tolerance.
!
!   heat_picard_fortran [--cells=64] [--help]    (--cells: cells per side)
program heat_picard
  implicit none
  integer, parameter :: dp = kind(1.0d0)
  integer, parameter :: max_passes = 5000, sweeps = 4
  real(dp), parameter :: q = 10.0_dp, omega = 1.7_dp, tolerance = 1.0e-10_dp
  integer :: n, i, j, pass, sweep
  real(dp) :: h, change, east, west, north, south, diagonal, relaxed
  real(dp), allocatable :: t(:, :), k(:, :), t_old(:, :)
  character(len=64) :: argument
  integer :: a, read_status

  n = 64
  do a = 1, command_argument_count()
    call get_command_argument(a, argument)
    if (argument(1:8) == '--cells=') then
      read (argument(9:), *, iostat=read_status) n
      if (read_status /= 0) n = 0
    else if (argument == '--help') then
      print '(a)', 'usage: heat_picard_fortran [--cells=64] [--help]'
      print '(a)', '  --cells=N  cells per side of the unit square (default 64, at least 2)'
      print '(a)', '  --help     this text'
      stop
    else
      print '(3a)', 'heat_picard_fortran: unknown option ''', trim(argument), ''' (try --help)'
      error stop 2
    end if
  end do
  if (n < 2) then
    print '(a)', 'heat_picard_fortran: --cells must be an integer of at least 2'
    error stop 2
  end if
  h = 1.0_dp/n
  allocate (t(0:n + 1, 0:n + 1), k(0:n + 1, 0:n + 1), t_old(0:n + 1, 0:n + 1))
  t = 0.0_dp

  do pass = 1, max_passes
    t_old = t
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
    change = maxval(abs(t - t_old))
    if (change < tolerance) exit
  end do

  print '(a,i0,a,i0,a,es10.3,a,f8.5)', 'heat_picard: n = ', n, ', passes = ', pass, ', last change = ', change, &
    ', max T = ', maxval(t)
  if (change >= tolerance) then
    print '(a)', 'heat_picard: NOT converged'
    stop 1
  end if
end program heat_picard
