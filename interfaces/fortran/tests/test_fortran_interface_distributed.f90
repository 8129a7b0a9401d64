! Tests of the Fortran module nkit on MPI (solver%create_distributed), written
! as a Fortran user with an MPI code would; run by ctest on 1 and 2 ranks.
!  - Broyden's tridiagonal system (J.J. More, B.S. Garbow, K.E. Hillstrom,
!    "Testing unconstrained optimization software", ACM TOMS 7 (1981) 17-41,
!    problem 30), f_i = (3 - 2x_i)x_i - x_(i-1) - 2x_(i+1) + 1, x_0 = x_(n+1) = 0,
!    from x = -1; each rank owns a contiguous slice and the residual exchanges
!    the two neighbour values with MPI_Sendrecv.
!  - The split solve matches a serial solve of the whole system (on every rank)
!    to 1e-9 with the same number of Newton steps: the two differ only in the
!    order of the reduction sums, and both stop at ||R|| <= 1e-12 ||R(x0)||
!    where the Jacobian is diagonally dominant, so both lie within about that
!    residual of the root. Every rank reads the same step count.
! Stops with code 1 on a failed check (on any rank).
module distributed_test_problem
  use, intrinsic :: iso_c_binding, only: c_double
  use mpi
  implicit none
  integer, parameter :: global_size = 120
  integer :: communicator = MPI_COMM_NULL, rank = 0, ranks = 1
contains
  subroutine broyden_tridiagonal(x, f, status)
    real(c_double), intent(in) :: x(:)
    real(c_double), intent(inout) :: f(:)
    integer, intent(inout) :: status
    real(c_double) :: left, right
    integer :: n, lower, upper, error
    n = size(x)
    left = 0
    right = 0
    if (communicator /= MPI_COMM_NULL) then
      lower = merge(rank - 1, MPI_PROC_NULL, rank > 0)
      upper = merge(rank + 1, MPI_PROC_NULL, rank + 1 < ranks)
      call MPI_Sendrecv(x(n), 1, MPI_DOUBLE_PRECISION, upper, 1, left, 1, MPI_DOUBLE_PRECISION, lower, 1, &
                        communicator, MPI_STATUS_IGNORE, error)
      call MPI_Sendrecv(x(1), 1, MPI_DOUBLE_PRECISION, lower, 2, right, 1, MPI_DOUBLE_PRECISION, upper, 2, &
                        communicator, MPI_STATUS_IGNORE, error)
      if (error /= MPI_SUCCESS) status = 1
    end if
    f = (3 - 2*x)*x + 1
    f(1) = f(1) - left
    f(2:n) = f(2:n) - x(1:n - 1)
    f(1:n - 1) = f(1:n - 1) - 2*x(2:n)
    f(n) = f(n) - 2*right
  end subroutine broyden_tridiagonal
end module distributed_test_problem

program test_fortran_interface_distributed
  use, intrinsic :: iso_c_binding
  use mpi
  use nkit
  use distributed_test_problem
  implicit none
  type(nkit_solver) :: serial, split
  real(c_double) :: whole(global_size)
  real(c_double), allocatable :: part(:)
  integer(c_int64_t) :: serial_steps, split_steps, fewest, most
  real(c_double) :: local_difference, difference
  integer :: error, first, last, failures, any_failures

  failures = 0
  call MPI_Init(error)
  call MPI_Comm_rank(MPI_COMM_WORLD, rank, error)
  call MPI_Comm_size(MPI_COMM_WORLD, ranks, error)
  first = global_size*rank/ranks + 1
  last = global_size*(rank + 1)/ranks
  allocate (part(last - first + 1))
  call check(nkit_has_distributed(), 'nkit_has_distributed()')

  ! The whole system on this rank (the residual sees no communicator).
  communicator = MPI_COMM_NULL
  call check(serial%create() == nkit_status_success, 'serial create')
  call check(serial%set_real('relative_tolerance', 1e-12_c_double) == nkit_status_success, 'serial tolerance')
  call check(serial%set_residual(broyden_tridiagonal) == nkit_status_success, 'serial residual')
  whole = -1
  call check(serial%solve(whole) == nkit_status_success, 'serial solve: '//nkit_error_message())
  call check(serial%converged(), 'serial converged')
  call check(serial%report_integer('iterations', serial_steps) == nkit_status_success, 'serial steps')

  ! The split system over MPI_COMM_WORLD.
  communicator = MPI_COMM_WORLD
  call check(split%create_distributed(MPI_COMM_WORLD) == nkit_status_success, 'create_distributed: '//nkit_error_message())
  call check(split%set_real('relative_tolerance', 1e-12_c_double) == nkit_status_success, 'split tolerance')
  call check(split%set_residual(broyden_tridiagonal) == nkit_status_success, 'split residual')
  part = -1
  call check(split%solve(part) == nkit_status_success, 'split solve: '//nkit_error_message())
  call check(split%converged(), 'split converged')
  call check(split%report_integer('iterations', split_steps) == nkit_status_success, 'split steps')
  call check(split_steps == serial_steps, 'same Newton steps as the serial solve')
  call MPI_Allreduce(split_steps, fewest, 1, MPI_INTEGER8, MPI_MIN, MPI_COMM_WORLD, error)
  call MPI_Allreduce(split_steps, most, 1, MPI_INTEGER8, MPI_MAX, MPI_COMM_WORLD, error)
  call check(fewest == most, 'every rank reads the same step count')
  local_difference = maxval(abs(part - whole(first:last)))
  call MPI_Allreduce(local_difference, difference, 1, MPI_DOUBLE_PRECISION, MPI_MAX, MPI_COMM_WORLD, error)
  call check(difference <= 1e-9_c_double, 'split solution = serial solution')
  if (rank == 0) print '(a, i0, a, i0, a, es9.2)', 'Fortran distributed: ', split_steps, ' Newton steps (serial ', &
    serial_steps, '), max |split - serial| = ', difference

  call check(serial%destroy() == nkit_status_success, 'serial destroy')
  call check(split%destroy() == nkit_status_success, 'split destroy')
  call MPI_Allreduce(failures, any_failures, 1, MPI_INTEGER, MPI_MAX, MPI_COMM_WORLD, error)
  call MPI_Finalize(error)
  if (any_failures > 0) stop 1

contains
  subroutine check(condition, what)
    logical, intent(in) :: condition
    character(len=*), intent(in) :: what
    if (.not. condition) then
      print '(a, i0, 2a)', 'rank ', rank, ': check failed: ', what
      failures = failures + 1
    end if
  end subroutine check
end program test_fortran_interface_distributed
