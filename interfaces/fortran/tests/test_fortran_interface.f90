! Tests of the Fortran module nkit, written as a Fortran user would.
!  - The cubic system u_i**3 + u_i = a_i**3 + a_i (invented for the test) has
!    the unique real solution u = a (x**3 + x is strictly increasing).
!  - The discretised Chandrasekhar H-equation satisfies (c/2N) sum(H) =
!    1 - sqrt(1 - c) exactly (derived in tests/support/chandrasekhar_h_equation.hpp;
!    S. Chandrasekhar, Radiative Transfer, 1950, the moment relation - from memory).
!  - The state array given to solve() is updated in place; callbacks work on
!    nkit's vectors through c_f_pointer (no copy, by construction of the module).
!  - Errors come back as statuses with a message; a failing callback ends the
!    solve with nkit_status_callback_failed.
! Stops with code 1 on the first failed check.
module fortran_test_problems
  use, intrinsic :: iso_c_binding, only: c_double
  implicit none
  integer, parameter :: n_cubic = 40, n_h = 80
  real(c_double) :: a(n_cubic)
  real(c_double) :: mu(n_h), c_albedo = 0.9_c_double
  integer :: residual_calls = 0, map_calls = 0, monitor_calls = 0, apply_calls = 0
  integer :: fail_at = 0
  real(c_double) :: diagonal(n_cubic)
contains
  subroutine cubic(u, r, status)
    real(c_double), intent(in) :: u(:)
    real(c_double), intent(inout) :: r(:)
    integer, intent(inout) :: status
    residual_calls = residual_calls + 1
    if (fail_at > 0 .and. residual_calls == fail_at) then
      status = 5
      return
    end if
    r = u**3 + u - (a**3 + a)
  end subroutine cubic

  subroutine jacobi_setup(u, r, status)
    real(c_double), intent(in) :: u(:), r(:)
    integer, intent(inout) :: status
    if (size(r) /= size(u)) status = 1
    diagonal = 3*u**2 + 1
  end subroutine jacobi_setup

  subroutine jacobi_apply(r, z, status)
    real(c_double), intent(in) :: r(:)
    real(c_double), intent(inout) :: z(:)
    integer, intent(inout) :: status
    apply_calls = apply_calls + 1
    z = r/diagonal
    if (size(z) /= n_cubic) status = 1
  end subroutine jacobi_apply

  subroutine h_map(h, g, status)
    real(c_double), intent(in) :: h(:)
    real(c_double), intent(inout) :: g(:)
    integer, intent(inout) :: status
    integer :: i
    map_calls = map_calls + 1
    do i = 1, size(h)
      g(i) = 1/(1 - c_albedo/(2*size(h))*mu(i)*sum(h/(mu(i) + mu)))
    end do
    if (size(g) /= size(h)) status = 1
  end subroutine h_map

  logical function stop_after_two(summary)
    use nkit, only: nkit_iteration_summary
    type(nkit_iteration_summary), intent(in) :: summary
    monitor_calls = monitor_calls + 1
    stop_after_two = summary%iteration >= 2
  end function stop_after_two
end module fortran_test_problems

program test_fortran_interface
  use, intrinsic :: iso_c_binding
  use nkit
  use fortran_test_problems
  implicit none
  type(nkit_solver) :: solver, never_created
  type(nkit_settings) :: settings
  real(c_double) :: u(n_cubic), h(n_h), value
  integer(c_int64_t) :: count, steps
  type(nkit_iteration_summary) :: summary
  character(len=32) :: methods(2)
  integer :: i, k

  do i = 1, n_cubic
    a(i) = 0.1_c_double*i
  end do
  do i = 1, n_h
    mu(i) = (i - 0.5_c_double)/n_h
  end do

  ! Newton-Krylov on a residual, with a Fortran preconditioner.
  call expect(solver%create(), nkit_status_success)
  call expect(solver%set_residual(cubic), nkit_status_success)
  call expect(solver%set_real('relative_tolerance', 1e-12_c_double), nkit_status_success)
  u = 0
  call expect(solver%solve(u), nkit_status_success)
  call check(solver%converged(), 'cubic converged')
  ! |R| <= 1e-12 |R(0)| and R'(u) >= 1: |u - a| <= 1e-10
  call check(maxval(abs(u - a)) <= 1e-10_c_double, 'cubic solution')
  call expect(solver%report_integer('residual_evaluations', count), nkit_status_success)
  call check(count == residual_calls, 'every residual call is counted')
  call expect(solver%set_preconditioner(jacobi_apply, jacobi_setup), nkit_status_success)
  u = 0
  call expect(solver%solve(u), nkit_status_success)
  call expect(solver%report_integer('iterations', steps), nkit_status_success)
  call expect(solver%report_integer('linear_iterations', count), nkit_status_success)
  ! The exact inverse of the diagonal Jacobian: one GMRES iteration per Newton step.
  call check(count == steps .and. apply_calls > 0, 'exact preconditioner')
  call check(solver%stop_reason() == 'relative_tolerance_met', 'stop reason')

  ! A monitor that stops after two steps (a stop reason, not an error).
  call expect(solver%set_monitor(stop_after_two), nkit_status_success)
  u = 0
  call expect(solver%solve(u), nkit_status_success)
  call check(solver%stop_reason() == 'monitor_requested_stop' .and. monitor_calls == 2, 'monitor stops')
  call expect(solver%report_iteration(2, summary), nkit_status_success)
  call check(summary%iteration == 2, 'iteration summary')
  call expect(solver%report_iteration(3, summary), nkit_status_no_report)

  ! A failing residual: error status, message naming the callback, state finite.
  fail_at = residual_calls + 3
  u = 0
  call expect(solver%solve(u), nkit_status_callback_failed)
  call check(index(nkit_error_message(), 'the residual callback returned 5 (failure)') > 0, 'failure message')
  call check(all(abs(u) < huge(1.0_c_double)), 'state finite after failure')
  fail_at = 0
  call expect(solver%destroy(), nkit_status_success)

  ! The fixed-point map through both methods.
  methods(1) = 'newton_krylov_on_fixed_point_map'
  methods(2) = 'anderson'
  do k = 1, 2
    call expect(solver%create(), nkit_status_success)
    call expect(solver%set_text('method', methods(k)), nkit_status_success)
    call expect(solver%set_fixed_point_map(h_map), nkit_status_success)
    call expect(solver%set_real('relative_tolerance', 1e-10_c_double), nkit_status_success)
    h = 1
    map_calls = 0
    call expect(solver%solve(h), nkit_status_success)
    call check(solver%converged(), trim(methods(k))//' converged')
    ! |f| <= 1e-10 |f0| bounds the error of H near 1e-9: the moment to 1e-8.
    call check(abs(c_albedo/(2*n_h)*sum(h) - (1 - sqrt(1 - c_albedo))) <= 1e-8_c_double, 'moment relation')
    call expect(solver%report_integer('residual_evaluations', count), nkit_status_success)
    call check(count == map_calls, 'every map call is counted')
    call expect(solver%destroy(), nkit_status_success)
  end do

  ! Settings by field and by name; errors as statuses with messages.
  call expect(solver%create(), nkit_status_success)
  call expect(nkit_settings_defaults(settings), nkit_status_success)
  call check(settings%anderson_depth == 5 .and. settings%restart_length == 30, 'defaults')
  settings%anderson_depth = 9
  settings%method = 2
  call expect(solver%configure(settings), nkit_status_success)
  call expect(solver%get_integer('anderson.depth', count), nkit_status_success)
  call check(count == 9, 'depth by field, read by name')
  call expect(solver%set_real('anderson.mixing', 0.7_c_double), nkit_status_success)
  call expect(solver%get_real('anderson.mixing', value), nkit_status_success)
  call check(value == 0.7_c_double, 'mixing by name')
  call expect(solver%set_integer('linear.restart_length', 0), nkit_status_invalid_argument)
  call check(nkit_error_message() == 'nkit: newton_settings.linear.restart_length must be >= 1 (got 0)', &
             'restart length message')
  call expect(solver%set_text('globalization', 'no_such_strategy'), nkit_status_invalid_argument)
  call expect(solver%solve(h), nkit_status_missing_callback)
  call expect(solver%destroy(), nkit_status_success)
  ! A handle that was never created.
  call expect(never_created%solve(h), nkit_status_invalid_argument)
  call check(index(nkit_error_message(), 'solver is NULL') > 0, 'NULL handle message')
  call expect(never_created%set_fixed_point_map(h_map), nkit_status_invalid_argument)

  print '(a)', 'all Fortran interface checks passed'

contains

  subroutine expect(status, expected)
    integer, intent(in) :: status, expected
    if (status /= expected) then
      print '(a,i0,a,i0,2a)', 'status ', status, ', expected ', expected, ': ', nkit_error_message()
      error stop 1
    end if
  end subroutine expect

  subroutine check(condition, what)
    logical, intent(in) :: condition
    character(len=*), intent(in) :: what
    if (.not. condition) then
      print '(2a)', 'check failed: ', what
      error stop 1
    end if
  end subroutine check
end program test_fortran_interface
