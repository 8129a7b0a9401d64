! Solves u**3 = 8 through the installed (or embedded) Fortran module and checks u = 2.
module consumer_problem
  use, intrinsic :: iso_c_binding, only: c_double
  implicit none
contains
  subroutine cube_minus_eight(u, r, status)
    real(c_double), intent(in) :: u(:)
    real(c_double), intent(inout) :: r(:)
    integer, intent(inout) :: status
    r = u**3 - 8
    if (size(u) /= 1) status = 1
  end subroutine cube_minus_eight
end module consumer_problem

program consumer_fortran
  use, intrinsic :: iso_c_binding, only: c_double
  use nkit
  use consumer_problem
  implicit none
  type(nkit_solver) :: solver
  real(c_double) :: u(1)
  integer :: status
  u = 1
  status = solver%create()
  status = solver%set_residual(cube_minus_eight)
  status = solver%set_real('relative_tolerance', 1e-12_c_double)
  status = solver%solve(u)
  if (status /= nkit_status_success) then
    print '(a)', nkit_error_message()
    stop 1
  end if
  print '(a, f17.15)', 'Fortran consumer: u = ', u(1)
  if (.not. solver%converged() .or. abs(u(1) - 2) > 1e-10_c_double) stop 1
  status = solver%destroy()
end program consumer_fortran
