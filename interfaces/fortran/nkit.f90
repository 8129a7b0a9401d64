!> Module nkit: the Fortran 2003 interface to nkit, over the C interface
!> (interfaces/c/include/nkit_c.h) through iso_c_binding.
!>
!> Callbacks are ordinary Fortran procedures with assumed-shape arrays; the
!> module's bind(c) trampolines map nkit's C arrays onto them with
!> c_f_pointer, so no array is copied. The state passed to solve() must be
!> contiguous (it is then passed by address, without a copy). Every function
!> returns an integer status (nkit_status_success = 0); nkit_error_message()
!> gives the text of the last error in this thread. Expected numerical endings
!> (not converged, budget spent) are not errors: see converged() and
!> stop_reason(). A converged residual is not a validated model.
!>
!>   use nkit
!>   type(nkit_solver) :: solver
!>   status = solver%create()
!>   status = solver%set_text('method', 'anderson')
!>   status = solver%set_fixed_point_map(my_map)    ! subroutine my_map(u, g, status)
!>   status = solver%solve(u)
!>   status = solver%destroy()
!>
!> Not thread-safe: create, use and destroy solvers from one thread.
module nkit
  use, intrinsic :: iso_c_binding
  implicit none
  private

  integer, parameter, public :: nkit_status_success = 0
  integer, parameter, public :: nkit_status_invalid_argument = 1
  integer, parameter, public :: nkit_status_missing_callback = 2
  integer, parameter, public :: nkit_status_callback_failed = 3
  integer, parameter, public :: nkit_status_out_of_memory = 4
  integer, parameter, public :: nkit_status_no_report = 5
  integer, parameter, public :: nkit_status_internal_error = 6

  !> One completed iteration (the C struct nkit_iteration_summary).
  type, bind(c), public :: nkit_iteration_summary
    integer(c_int32_t) :: iteration
    integer(c_int32_t) :: linear_iterations
    integer(c_int32_t) :: depth_used
    integer(c_int32_t) :: restarted
    real(c_double) :: residual_norm
    real(c_double) :: relative_residual_norm
    real(c_double) :: step_norm
    real(c_double) :: elapsed_seconds
    integer(c_int64_t) :: residual_evaluations
  end type nkit_iteration_summary

  !> Settings by field (the C struct nkit_settings; see nkit_c.h for each field).
  type, bind(c), public :: nkit_settings
    integer(c_int32_t) :: method
    real(c_double) :: relative_tolerance
    real(c_double) :: absolute_tolerance
    integer(c_int32_t) :: iteration_budget
    integer(c_int64_t) :: residual_evaluation_budget
    real(c_double) :: wall_time_budget_seconds
    integer(c_int32_t) :: globalization
    integer(c_int32_t) :: restart_length
    integer(c_int32_t) :: maximum_linear_iterations
    real(c_double) :: residual_relative_noise
    integer(c_int32_t) :: anderson_depth
    real(c_double) :: anderson_mixing
    real(c_double) :: anderson_maximum_condition_number
    integer(c_int32_t) :: anderson_restart_window
  end type nkit_settings

  abstract interface
    !> Residual R(input) or map G(input) into output. status is 0 on entry;
    !> set it nonzero to report failure (the solve then returns
    !> nkit_status_callback_failed).
    subroutine nkit_vector_procedure(input, output, status)
      import :: c_double
      real(c_double), intent(in) :: input(:)
      real(c_double), intent(inout) :: output(:)
      integer, intent(inout) :: status
    end subroutine nkit_vector_procedure
    !> Preconditioner setup at the Newton iterate (state, residual).
    subroutine nkit_preconditioner_setup_procedure(state, residual, status)
      import :: c_double
      real(c_double), intent(in) :: state(:)
      real(c_double), intent(in) :: residual(:)
      integer, intent(inout) :: status
    end subroutine nkit_preconditioner_setup_procedure
    !> z = M⁻¹ r.
    subroutine nkit_preconditioner_apply_procedure(r, z, status)
      import :: c_double
      real(c_double), intent(in) :: r(:)
      real(c_double), intent(inout) :: z(:)
      integer, intent(inout) :: status
    end subroutine nkit_preconditioner_apply_procedure
    !> Called after each iteration; return .true. to stop the solve.
    logical function nkit_monitor_procedure(summary)
      import :: nkit_iteration_summary
      type(nkit_iteration_summary), intent(in) :: summary
    end function nkit_monitor_procedure
  end interface
  public :: nkit_vector_procedure, nkit_preconditioner_setup_procedure, nkit_preconditioner_apply_procedure
  public :: nkit_monitor_procedure

  !> A solver handle. Create before use, destroy when done.
  type, public :: nkit_solver
    type(c_ptr) :: handle = c_null_ptr
    integer :: slot = 0
  contains
    procedure :: create => solver_create
    procedure :: create_distributed => solver_create_distributed
    procedure :: destroy => solver_destroy
    procedure :: set_residual => solver_set_residual
    procedure :: set_fixed_point_map => solver_set_fixed_point_map
    procedure :: set_preconditioner => solver_set_preconditioner
    procedure :: set_monitor => solver_set_monitor
    procedure :: set_bounds => solver_set_bounds
    procedure :: clear_bounds => solver_clear_bounds
    procedure :: set_real => solver_set_real
    procedure :: set_integer => solver_set_integer
    procedure :: set_text => solver_set_text
    procedure :: get_real => solver_get_real
    procedure :: get_integer => solver_get_integer
    procedure :: get_settings => solver_get_settings
    procedure :: configure => solver_configure
    procedure :: solve => solver_solve
    procedure :: converged => solver_converged
    procedure :: stop_reason => solver_stop_reason
    procedure :: message => solver_message
    procedure :: report_integer => solver_report_integer
    procedure :: report_real => solver_report_real
    procedure :: report_iteration => solver_report_iteration
  end type nkit_solver

  public :: nkit_error_message, nkit_settings_defaults, nkit_has_distributed

  ! The Fortran procedures of each solver, found by the trampolines through
  ! the slot number passed to C as the user pointer.
  type :: callback_slot
    logical :: in_use = .false.
    procedure(nkit_vector_procedure), pointer, nopass :: residual => null()
    procedure(nkit_vector_procedure), pointer, nopass :: map => null()
    procedure(nkit_preconditioner_setup_procedure), pointer, nopass :: setup => null()
    procedure(nkit_preconditioner_apply_procedure), pointer, nopass :: apply => null()
    procedure(nkit_monitor_procedure), pointer, nopass :: monitor => null()
  end type callback_slot
  type(callback_slot), allocatable, save :: slots(:)

  interface
    integer(c_int) function c_solver_create(solver) bind(c, name="nkit_solver_create")
      import :: c_int, c_ptr
      type(c_ptr), intent(out) :: solver
    end function c_solver_create
    integer(c_int) function c_solver_create_distributed(solver, communicator) &
        bind(c, name="nkit_solver_create_distributed_fortran")
      import :: c_int, c_int32_t, c_ptr
      type(c_ptr), intent(out) :: solver
      integer(c_int32_t), value :: communicator
    end function c_solver_create_distributed
    integer(c_int32_t) function c_has_distributed() bind(c, name="nkit_has_distributed")
      import :: c_int32_t
    end function c_has_distributed
    integer(c_int) function c_solver_destroy(solver) bind(c, name="nkit_solver_destroy")
      import :: c_int, c_ptr
      type(c_ptr), value :: solver
    end function c_solver_destroy
    type(c_ptr) function c_last_error_message() bind(c, name="nkit_last_error_message")
      import :: c_ptr
    end function c_last_error_message
    integer(c_int) function c_set_residual(solver, function, user_data) bind(c, name="nkit_set_residual")
      import :: c_int, c_ptr, c_funptr
      type(c_ptr), value :: solver
      type(c_funptr), value :: function
      type(c_ptr), value :: user_data
    end function c_set_residual
    integer(c_int) function c_set_fixed_point_map(solver, function, user_data) &
        bind(c, name="nkit_set_fixed_point_map")
      import :: c_int, c_ptr, c_funptr
      type(c_ptr), value :: solver
      type(c_funptr), value :: function
      type(c_ptr), value :: user_data
    end function c_set_fixed_point_map
    integer(c_int) function c_set_preconditioner(solver, setup, apply, user_data) &
        bind(c, name="nkit_set_preconditioner")
      import :: c_int, c_ptr, c_funptr
      type(c_ptr), value :: solver
      type(c_funptr), value :: setup, apply
      type(c_ptr), value :: user_data
    end function c_set_preconditioner
    integer(c_int) function c_set_monitor(solver, function, user_data) bind(c, name="nkit_set_monitor")
      import :: c_int, c_ptr, c_funptr
      type(c_ptr), value :: solver
      type(c_funptr), value :: function
      type(c_ptr), value :: user_data
    end function c_set_monitor
    integer(c_int) function c_set_bounds(solver, lower, upper, size) bind(c, name="nkit_set_bounds")
      import :: c_int, c_ptr, c_int64_t
      type(c_ptr), value :: solver, lower, upper
      integer(c_int64_t), value :: size
    end function c_set_bounds
    integer(c_int) function c_set_real(solver, name, value) bind(c, name="nkit_set_real")
      import :: c_int, c_ptr, c_char, c_double
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*)
      real(c_double), value :: value
    end function c_set_real
    integer(c_int) function c_set_integer(solver, name, value) bind(c, name="nkit_set_integer")
      import :: c_int, c_ptr, c_char, c_int64_t
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*)
      integer(c_int64_t), value :: value
    end function c_set_integer
    integer(c_int) function c_set_text(solver, name, value) bind(c, name="nkit_set_text")
      import :: c_int, c_ptr, c_char
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*), value(*)
    end function c_set_text
    integer(c_int) function c_get_real(solver, name, value) bind(c, name="nkit_get_real")
      import :: c_int, c_ptr, c_char, c_double
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*)
      real(c_double), intent(out) :: value
    end function c_get_real
    integer(c_int) function c_get_integer(solver, name, value) bind(c, name="nkit_get_integer")
      import :: c_int, c_ptr, c_char, c_int64_t
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*)
      integer(c_int64_t), intent(out) :: value
    end function c_get_integer
    integer(c_int) function c_settings_defaults(settings) bind(c, name="nkit_settings_defaults")
      import :: c_int, nkit_settings
      type(nkit_settings), intent(out) :: settings
    end function c_settings_defaults
    integer(c_int) function c_get_settings(solver, settings) bind(c, name="nkit_get_settings")
      import :: c_int, c_ptr, nkit_settings
      type(c_ptr), value :: solver
      type(nkit_settings), intent(out) :: settings
    end function c_get_settings
    integer(c_int) function c_configure(solver, settings) bind(c, name="nkit_configure")
      import :: c_int, c_ptr, nkit_settings
      type(c_ptr), value :: solver
      type(nkit_settings), intent(in) :: settings
    end function c_configure
    integer(c_int) function c_solve(solver, state, size) bind(c, name="nkit_solve")
      import :: c_int, c_ptr, c_double, c_int64_t
      type(c_ptr), value :: solver
      real(c_double), intent(inout) :: state(*)
      integer(c_int64_t), value :: size
    end function c_solve
    integer(c_int) function c_report_converged(solver, converged) bind(c, name="nkit_report_converged")
      import :: c_int, c_ptr, c_int32_t
      type(c_ptr), value :: solver
      integer(c_int32_t), intent(out) :: converged
    end function c_report_converged
    type(c_ptr) function c_report_stop_reason(solver) bind(c, name="nkit_report_stop_reason")
      import :: c_ptr
      type(c_ptr), value :: solver
    end function c_report_stop_reason
    type(c_ptr) function c_report_message(solver) bind(c, name="nkit_report_message")
      import :: c_ptr
      type(c_ptr), value :: solver
    end function c_report_message
    integer(c_int) function c_report_integer(solver, name, value) bind(c, name="nkit_report_integer")
      import :: c_int, c_ptr, c_char, c_int64_t
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*)
      integer(c_int64_t), intent(out) :: value
    end function c_report_integer
    integer(c_int) function c_report_real(solver, name, value) bind(c, name="nkit_report_real")
      import :: c_int, c_ptr, c_char, c_double
      type(c_ptr), value :: solver
      character(kind=c_char), intent(in) :: name(*)
      real(c_double), intent(out) :: value
    end function c_report_real
    integer(c_int) function c_report_iteration(solver, index, summary) bind(c, name="nkit_report_iteration")
      import :: c_int, c_ptr, c_int64_t, nkit_iteration_summary
      type(c_ptr), value :: solver
      integer(c_int64_t), value :: index
      type(nkit_iteration_summary), intent(out) :: summary
    end function c_report_iteration
    pure integer(c_size_t) function c_strlen(text) bind(c, name="strlen")
      import :: c_size_t, c_ptr
      type(c_ptr), value, intent(in) :: text
    end function c_strlen
  end interface

contains

  ! ---- helpers -------------------------------------------------------------------------

  !> Fortran copy of a NUL-terminated C string.
  function text_of(pointer) result(text)
    type(c_ptr), intent(in) :: pointer
    character(len=:), allocatable :: text
    character(kind=c_char), pointer :: characters(:)
    integer :: i, length
    if (.not. c_associated(pointer)) then
      text = ''
      return
    end if
    length = int(c_strlen(pointer))
    call c_f_pointer(pointer, characters, [length])
    allocate (character(len=length) :: text)
    do i = 1, length
      text(i:i) = characters(i)
    end do
  end function text_of

  !> The message of the last failing nkit call in this thread ('' after a success).
  function nkit_error_message() result(text)
    character(len=:), allocatable :: text
    text = text_of(c_last_error_message())
  end function nkit_error_message

  !> nkit's default settings.
  integer function nkit_settings_defaults(settings) result(status)
    type(nkit_settings), intent(out) :: settings
    status = c_settings_defaults(settings)
  end function nkit_settings_defaults

  type(c_ptr) function slot_pointer(slot)
    integer, intent(in) :: slot
    slot_pointer = transfer(int(slot, c_intptr_t), c_null_ptr)
  end function slot_pointer

  integer function slot_of(user_data)
    type(c_ptr), value :: user_data
    slot_of = int(transfer(user_data, 0_c_intptr_t))
  end function slot_of

  integer function new_slot()
    type(callback_slot), allocatable :: grown(:)
    integer :: i
    if (.not. allocated(slots)) allocate (slots(4))
    do i = 1, size(slots)
      if (.not. slots(i)%in_use) then
        new_slot = i
        slots(i) = callback_slot()
        slots(i)%in_use = .true.
        return
      end if
    end do
    allocate (grown(2*size(slots)))
    grown(1:size(slots)) = slots
    new_slot = size(slots) + 1
    call move_alloc(grown, slots)
    slots(new_slot)%in_use = .true.
  end function new_slot

  ! ---- trampolines: C calls these, they call the Fortran procedures ------------------------------

  integer(c_int) function residual_trampoline(input, output, size, user_data) bind(c)
    type(c_ptr), value :: input, output, user_data
    integer(c_int64_t), value :: size
    real(c_double), pointer :: x(:), y(:)
    integer :: status
    call c_f_pointer(input, x, [size])
    call c_f_pointer(output, y, [size])
    status = 0
    call slots(slot_of(user_data))%residual(x, y, status)
    residual_trampoline = int(status, c_int)
  end function residual_trampoline

  integer(c_int) function map_trampoline(input, output, size, user_data) bind(c)
    type(c_ptr), value :: input, output, user_data
    integer(c_int64_t), value :: size
    real(c_double), pointer :: x(:), y(:)
    integer :: status
    call c_f_pointer(input, x, [size])
    call c_f_pointer(output, y, [size])
    status = 0
    call slots(slot_of(user_data))%map(x, y, status)
    map_trampoline = int(status, c_int)
  end function map_trampoline

  integer(c_int) function setup_trampoline(state, residual, size, user_data) bind(c)
    type(c_ptr), value :: state, residual, user_data
    integer(c_int64_t), value :: size
    real(c_double), pointer :: x(:), r(:)
    integer :: status
    call c_f_pointer(state, x, [size])
    call c_f_pointer(residual, r, [size])
    status = 0
    call slots(slot_of(user_data))%setup(x, r, status)
    setup_trampoline = int(status, c_int)
  end function setup_trampoline

  integer(c_int) function apply_trampoline(r, z, size, user_data) bind(c)
    type(c_ptr), value :: r, z, user_data
    integer(c_int64_t), value :: size
    real(c_double), pointer :: rr(:), zz(:)
    integer :: status
    call c_f_pointer(r, rr, [size])
    call c_f_pointer(z, zz, [size])
    status = 0
    call slots(slot_of(user_data))%apply(rr, zz, status)
    apply_trampoline = int(status, c_int)
  end function apply_trampoline

  integer(c_int) function monitor_trampoline(summary, user_data) bind(c)
    type(nkit_iteration_summary), intent(in) :: summary
    type(c_ptr), value :: user_data
    monitor_trampoline = 0
    if (slots(slot_of(user_data))%monitor(summary)) monitor_trampoline = 1
  end function monitor_trampoline

  ! ---- the handle ------------------------------------------------------------------------------

  integer function solver_create(self) result(status)
    class(nkit_solver), intent(inout) :: self
    status = c_solver_create(self%handle)
    if (status == nkit_status_success) self%slot = new_slot()
  end function solver_create

  !> A distributed solver over an MPI communicator: pass the integer handle
  !> (MPI_COMM_WORLD from `use mpi`, or comm%MPI_VAL from `use mpi_f08`).
  !> Every rank creates its own handle and calls solve() with its own slice of
  !> the state; callbacks receive that slice (nkit_c.h states the rules).
  !> Fails with nkit_status_invalid_argument when nkit was built without MPI
  !> (see nkit_has_distributed()).
  integer function solver_create_distributed(self, communicator) result(status)
    class(nkit_solver), intent(inout) :: self
    integer, intent(in) :: communicator
    status = c_solver_create_distributed(self%handle, int(communicator, c_int32_t))
    if (status == nkit_status_success) self%slot = new_slot()
  end function solver_create_distributed

  !> .true. when the library was built with MPI (create_distributed works).
  logical function nkit_has_distributed()
    nkit_has_distributed = c_has_distributed() /= 0
  end function nkit_has_distributed

  integer function solver_destroy(self) result(status)
    class(nkit_solver), intent(inout) :: self
    status = c_solver_destroy(self%handle)
    self%handle = c_null_ptr
    if (self%slot > 0) slots(self%slot)%in_use = .false.
    self%slot = 0
  end function solver_destroy

  !> A handle that was never created: the C layer reports a NULL solver.
  logical function missing(self)
    class(nkit_solver), intent(in) :: self
    missing = self%slot == 0
  end function missing

  integer function solver_set_residual(self, residual) result(status)
    class(nkit_solver), intent(inout) :: self
    procedure(nkit_vector_procedure) :: residual
    if (missing(self)) then
      status = c_set_residual(c_null_ptr, c_null_funptr, c_null_ptr)
      return
    end if
    slots(self%slot)%residual => residual
    status = c_set_residual(self%handle, c_funloc(residual_trampoline), slot_pointer(self%slot))
  end function solver_set_residual

  integer function solver_set_fixed_point_map(self, map) result(status)
    class(nkit_solver), intent(inout) :: self
    procedure(nkit_vector_procedure) :: map
    if (missing(self)) then
      status = c_set_fixed_point_map(c_null_ptr, c_null_funptr, c_null_ptr)
      return
    end if
    slots(self%slot)%map => map
    status = c_set_fixed_point_map(self%handle, c_funloc(map_trampoline), slot_pointer(self%slot))
  end function solver_set_fixed_point_map

  !> setup is optional (a preconditioner that needs no rebuild).
  integer function solver_set_preconditioner(self, apply, setup) result(status)
    class(nkit_solver), intent(inout) :: self
    procedure(nkit_preconditioner_apply_procedure) :: apply
    procedure(nkit_preconditioner_setup_procedure), optional :: setup
    type(c_funptr) :: setup_function
    if (missing(self)) then
      status = c_set_preconditioner(c_null_ptr, c_null_funptr, c_null_funptr, c_null_ptr)
      return
    end if
    slots(self%slot)%apply => apply
    setup_function = c_null_funptr
    if (present(setup)) then
      slots(self%slot)%setup => setup
      setup_function = c_funloc(setup_trampoline)
    end if
    status = c_set_preconditioner(self%handle, setup_function, c_funloc(apply_trampoline), slot_pointer(self%slot))
  end function solver_set_preconditioner

  integer function solver_set_monitor(self, monitor) result(status)
    class(nkit_solver), intent(inout) :: self
    procedure(nkit_monitor_procedure) :: monitor
    if (missing(self)) then
      status = c_set_monitor(c_null_ptr, c_null_funptr, c_null_ptr)
      return
    end if
    slots(self%slot)%monitor => monitor
    status = c_set_monitor(self%handle, c_funloc(monitor_trampoline), slot_pointer(self%slot))
  end function solver_set_monitor

  integer function solver_set_bounds(self, lower, upper) result(status)
    class(nkit_solver), intent(inout) :: self
    real(c_double), intent(in), target, contiguous :: lower(:), upper(:)
    if (size(lower) /= size(upper)) then
      ! Let the C layer word the error: it sees a NULL upper bound.
      status = c_set_bounds(self%handle, c_loc(lower), c_null_ptr, int(size(lower), c_int64_t))
      return
    end if
    status = c_set_bounds(self%handle, c_loc(lower), c_loc(upper), int(size(lower), c_int64_t))
  end function solver_set_bounds

  integer function solver_clear_bounds(self) result(status)
    class(nkit_solver), intent(inout) :: self
    status = c_set_bounds(self%handle, c_null_ptr, c_null_ptr, 0_c_int64_t)
  end function solver_clear_bounds

  integer function solver_set_real(self, name, value) result(status)
    class(nkit_solver), intent(inout) :: self
    character(len=*), intent(in) :: name
    real(c_double), intent(in) :: value
    status = c_set_real(self%handle, trim(name)//c_null_char, value)
  end function solver_set_real

  integer function solver_set_integer(self, name, value) result(status)
    class(nkit_solver), intent(inout) :: self
    character(len=*), intent(in) :: name
    integer, intent(in) :: value
    status = c_set_integer(self%handle, trim(name)//c_null_char, int(value, c_int64_t))
  end function solver_set_integer

  integer function solver_set_text(self, name, value) result(status)
    class(nkit_solver), intent(inout) :: self
    character(len=*), intent(in) :: name, value
    status = c_set_text(self%handle, trim(name)//c_null_char, trim(value)//c_null_char)
  end function solver_set_text

  integer function solver_get_real(self, name, value) result(status)
    class(nkit_solver), intent(in) :: self
    character(len=*), intent(in) :: name
    real(c_double), intent(out) :: value
    status = c_get_real(self%handle, trim(name)//c_null_char, value)
  end function solver_get_real

  integer function solver_get_integer(self, name, value) result(status)
    class(nkit_solver), intent(in) :: self
    character(len=*), intent(in) :: name
    integer(c_int64_t), intent(out) :: value
    status = c_get_integer(self%handle, trim(name)//c_null_char, value)
  end function solver_get_integer

  integer function solver_get_settings(self, settings) result(status)
    class(nkit_solver), intent(in) :: self
    type(nkit_settings), intent(out) :: settings
    status = c_get_settings(self%handle, settings)
  end function solver_get_settings

  integer function solver_configure(self, settings) result(status)
    class(nkit_solver), intent(inout) :: self
    type(nkit_settings), intent(in) :: settings
    status = c_configure(self%handle, settings)
  end function solver_configure

  !> Solves from the initial guess in state (contiguous: passed without a copy).
  integer function solver_solve(self, state) result(status)
    class(nkit_solver), intent(inout) :: self
    real(c_double), intent(inout), contiguous :: state(:)
    status = c_solve(self%handle, state, int(size(state), c_int64_t))
  end function solver_solve

  !> .true. when the last solve converged (.false. also when there is no report).
  logical function solver_converged(self)
    class(nkit_solver), intent(in) :: self
    integer(c_int32_t) :: flag
    solver_converged = .false.
    if (c_report_converged(self%handle, flag) == nkit_status_success) solver_converged = flag == 1
  end function solver_converged

  function solver_stop_reason(self) result(text)
    class(nkit_solver), intent(in) :: self
    character(len=:), allocatable :: text
    text = text_of(c_report_stop_reason(self%handle))
  end function solver_stop_reason

  function solver_message(self) result(text)
    class(nkit_solver), intent(in) :: self
    character(len=:), allocatable :: text
    text = text_of(c_report_message(self%handle))
  end function solver_message

  integer function solver_report_integer(self, name, value) result(status)
    class(nkit_solver), intent(in) :: self
    character(len=*), intent(in) :: name
    integer(c_int64_t), intent(out) :: value
    status = c_report_integer(self%handle, trim(name)//c_null_char, value)
  end function solver_report_integer

  integer function solver_report_real(self, name, value) result(status)
    class(nkit_solver), intent(in) :: self
    character(len=*), intent(in) :: name
    real(c_double), intent(out) :: value
    status = c_report_real(self%handle, trim(name)//c_null_char, value)
  end function solver_report_real

  !> index 1 .. history_length (Fortran counting).
  integer function solver_report_iteration(self, index, summary) result(status)
    class(nkit_solver), intent(in) :: self
    integer, intent(in) :: index
    type(nkit_iteration_summary), intent(out) :: summary
    status = c_report_iteration(self%handle, int(index - 1, c_int64_t), summary)
  end function solver_report_iteration

end module nkit
