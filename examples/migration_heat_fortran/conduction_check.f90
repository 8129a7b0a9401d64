! The check the migrated heat programs run after the solve: the residual of
! the conduction equations themselves (not of the fixed-point map),
!   R_P = sum over faces of k_f (T_P - T_Q) - q h**2,   ||R(0)|| = q/n,
! with the discretisation of heat_picard.f90 (k = 1 + T**2, face k the mean,
! wall faces at distance h/2, ghost cells at T = 0).
module conduction_check
  implicit none
  private
  public :: relative_conduction_residual
  integer, parameter :: dp = kind(1.0d0)
contains
  !> ||R(T)|| / ||R(0)|| for t(0:n+1, 0:n+1) with its ghost ring at 0.
  real(dp) function relative_conduction_residual(t, n, q) result(relative)
    integer, intent(in) :: n
    real(dp), intent(in) :: t(0:n + 1, 0:n + 1), q
    real(dp) :: k(0:n + 1, 0:n + 1), r, squared, h
    integer :: i, j
    h = 1.0_dp/n
    k = 1.0_dp + t**2
    squared = 0.0_dp
    do j = 1, n
      do i = 1, n
        r = face(i + 1, j, i == n) + face(i - 1, j, i == 1) + face(i, j + 1, j == n) + face(i, j - 1, j == 1) - q*h*h
        squared = squared + r**2
      end do
    end do
    relative = sqrt(squared)/(q/n)
  contains
    real(dp) function face(a, b, wall)
      integer, intent(in) :: a, b
      logical, intent(in) :: wall
      face = 0.5_dp*(k(i, j) + k(a, b))*(t(i, j) - t(a, b))
      if (wall) face = 2.0_dp*face
    end function face
  end function relative_conduction_residual
end module conduction_check
