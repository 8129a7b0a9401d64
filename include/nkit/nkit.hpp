#ifndef NKIT_NKIT_HPP
#define NKIT_NKIT_HPP

/// \file nkit.hpp
/// Umbrella header: the public headers of nkit's core. Optional parts with
/// extra dependencies (MPI, hypre, SuiteSparse) are included separately.

#include "analytic_jacobian.hpp"
#include "automatic_differentiation.hpp"
#include "block_vector_space.hpp"
#include "bordered_system.hpp"
#include "bordered_vector_space.hpp"
#include "continuation.hpp"
#include "continuation_settings.hpp"
#include "continuation_tangent.hpp"
#include "eigen_vector_space.hpp"
#include "finite_difference_jacobian.hpp"
#include "forcing_term.hpp"
#include "gmres.hpp"
#include "line_search.hpp"
#include "linear_operator.hpp"
#include "monitor.hpp"
#include "newton_krylov_solver.hpp"
#include "outcome.hpp"
#include "parametrised_residual.hpp"
#include "preconditioner.hpp"
#include "pseudo_transient.hpp"
#include "report.hpp"
#include "report_output.hpp"
#include "residual.hpp"
#include "settings.hpp"
#include "trace.hpp"
#include "trace_output.hpp"
#include "trust_region.hpp"
#include "vector_space.hpp"
#include "version.hpp"

#endif  // NKIT_NKIT_HPP
