/* nkit_c_distributed.h: distributed (MPI) solver handles of the C interface.
 * Available when nkit_c was built with MPI (nkit_has_distributed() == 1);
 * the rules for distributed handles are in nkit_c.h, beside
 * nkit_solver_create_distributed_fortran. */
#ifndef NKIT_C_DISTRIBUTED_H
#define NKIT_C_DISTRIBUTED_H

#include <mpi.h>

#include "nkit_c.h"

#ifdef __cplusplus
extern "C" {
#endif

/* A handle whose reductions run on `communicator` (referenced, not
 * duplicated: it must outlive the handle). MPI must be initialised. */
nkit_status nkit_solver_create_distributed(nkit_solver** solver, MPI_Comm communicator);

#ifdef __cplusplus
}
#endif

#endif /* NKIT_C_DISTRIBUTED_H */
