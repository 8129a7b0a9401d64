# How nkit's own tests start MPI programs (never used by the library or by
# consumers): nkit_mpi_launch (a `cmake -E env ...` prefix) and nkit_mpi_flags
# (mpirun options), used as
#   ${nkit_mpi_launch} ${MPIEXEC_EXECUTABLE} ${MPIEXEC_NUMPROC_FLAG} <ranks> ${nkit_mpi_flags} <program>
#
# Containers and CI runners often run as root and have fewer cores than ranks;
# Open MPI refuses both unless told otherwise, so when
# NKIT_MPI_TESTS_ALLOW_ROOT_AND_OVERSUBSCRIBE is ON (the default) the test
# command sets OMPI_ALLOW_RUN_AS_ROOT=1 and OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1 and
# passes --oversubscribe. Turn the option OFF on a cluster whose launcher is
# not Open MPI's mpirun. Open MPI and hypre keep allocations alive until exit
# by design; under AddressSanitizer leak reports from them are switched off.
option(NKIT_MPI_TESTS_ALLOW_ROOT_AND_OVERSUBSCRIBE "Let ctest's mpirun run as root and oversubscribe cores" ON)
set(nkit_mpi_launch ${CMAKE_COMMAND} -E env)
set(nkit_mpi_flags ${MPIEXEC_PREFLAGS})
if(NKIT_MPI_TESTS_ALLOW_ROOT_AND_OVERSUBSCRIBE)
  execute_process(COMMAND ${MPIEXEC_EXECUTABLE} --version OUTPUT_VARIABLE nkit_mpiexec_version ERROR_QUIET)
  if(nkit_mpiexec_version MATCHES "Open MPI|OpenRTE")
    list(APPEND nkit_mpi_launch OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1)
    list(APPEND nkit_mpi_flags --oversubscribe)
  endif()
endif()
if(NKIT_SANITIZE MATCHES "address")
  list(APPEND nkit_mpi_launch ASAN_OPTIONS=detect_leaks=0)
endif()
