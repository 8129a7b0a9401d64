#ifndef NKIT_NKIT_HPP
#define NKIT_NKIT_HPP

/// \file nkit.hpp
/// Umbrella header: the public headers of nkit's core, folder by folder in
/// layer order (DEVELOPERS.md, "Layout"). Optional parts with extra
/// dependencies are included separately: time/odeint_stepper.hpp (Boost),
/// distributed/mpi_vector_space.hpp
/// (MPI), preconditioners/hypre_algebraic_multigrid.hpp and
/// preconditioners/hypre_structured_multigrid.hpp,
/// preconditioners/hypre_system_structured_multigrid.hpp (hypre),
/// preconditioners/suitesparse_direct.hpp (SuiteSparse), report/report_json.hpp
/// (nlohmann-json).

// core: concepts and vector spaces
#include "core/block_vector_space.hpp"
#include "core/eigen_vector_space.hpp"
#include "core/linear_operator.hpp"
#include "core/local_vector_operations.hpp"
#include "core/preconditioner.hpp"
#include "core/residual.hpp"
#include "core/vector_space.hpp"

#include "fields/field_blocks.hpp"
#include "fields/field_layout.hpp"
#include "fields/field_residual_norms.hpp"
// grids: cell-centred structured grids, their hierarchies and transfers
#include "grids/cell_centered_transfer.hpp"
#include "grids/structured_grid.hpp"
#include "grids/structured_grid_hierarchy.hpp"
// report: stop reasons, report, monitors, output, trace, scaling study
#include "report/monitor.hpp"
#include "report/outcome.hpp"
#include "report/phase_ledger.hpp"
#include "report/report.hpp"
#include "report/report_output.hpp"
#include "report/scaling_study.hpp"
#include "report/trace.hpp"
#include "report/trace_output.hpp"
// krylov
#include "krylov/gmres.hpp"
// jacobian: J·v, sparsity, coloring, sparse Jacobians
#include "jacobian/analytic_jacobian.hpp"
#include "jacobian/automatic_differentiation.hpp"
#include "jacobian/column_coloring.hpp"
#include "jacobian/finite_difference_jacobian.hpp"
#include "jacobian/sparse_jacobian.hpp"
#include "jacobian/sparsity_pattern.hpp"
// preconditioners (dependency-free ones)
#include "preconditioners/additive_schwarz.hpp"
#include "preconditioners/algebraic_multigrid_settings.hpp"
#include "preconditioners/block_ilu_zero.hpp"
#include "preconditioners/block_jacobi.hpp"
#include "preconditioners/field_split.hpp"
#include "preconditioners/ilu_zero.hpp"
#include "preconditioners/incomplete_lut.hpp"
#include "preconditioners/inner_gmres.hpp"
#include "preconditioners/jacobi.hpp"
#include "preconditioners/operator_split_pass.hpp"
#include "preconditioners/sparse_direct.hpp"
#include "preconditioners/structured_multigrid_settings.hpp"
// globalization: per-step strategies
#include "globalization/bounds.hpp"
#include "globalization/forcing_term.hpp"
#include "globalization/line_search.hpp"
#include "globalization/pseudo_transient.hpp"
#include "globalization/trust_region.hpp"
// newton: the driver
#include "newton/newton_krylov_solver.hpp"
#include "newton/newton_settings.hpp"
#include "newton/preconditioner_schedule.hpp"
#include "newton/problem_access.hpp"
#include "newton/run_handle.hpp"
// multilevel: grid sequencing (nested iteration)
#include "multilevel/grid_sequencing_report.hpp"
#include "multilevel/grid_sequencing_settings.hpp"
#include "multilevel/grid_sequencing_solver.hpp"
// continuation
#include "continuation/bordered_system.hpp"
#include "continuation/bordered_vector_space.hpp"
#include "continuation/continuation.hpp"
#include "continuation/continuation_settings.hpp"
#include "continuation/continuation_tangent.hpp"
#include "continuation/parametrized_residual.hpp"
// implicit time integration (time/odeint_stepper.hpp needs Boost: include it yourself)
#include "time/implicit_time_stepper.hpp"
// fixed-point maps: the adapter to Newton–Krylov and Anderson acceleration
#include "fixed_point/anderson_solver.hpp"
#include "fixed_point/fixed_point_residual.hpp"
#include "sensitivity/adjoint_sensitivity.hpp"
#include "sensitivity/direct_sensitivity.hpp"
#include "sensitivity/output_functional.hpp"
#include "sensitivity/parameter_residual.hpp"
#include "sensitivity/sensitivity_report.hpp"

#include "version.hpp"

#endif  // NKIT_NKIT_HPP
