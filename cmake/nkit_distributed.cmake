# Optional distributed parts of nkit, detected at configure time. Used twice:
# by nkit's own build and, installed beside nkitConfig.cmake, by a consumer's
# find_package(nkit), so both see the same targets:
#   nkit::mpi    nkit::nkit + MPI (C++); mpi_vector_space.hpp, the distributed
#                example and tests. Created only when MPI is found.
#   nkit::hypre  nkit::mpi + hypre (libHYPRE, headers in <prefix>/include/hypre);
#                hypre_algebraic_multigrid.hpp. Created only when MPI and hypre are found.
# The main target nkit::nkit never depends on MPI or hypre.
# Set NKIT_DISTRIBUTED_IMPORTED to ON before including this file to create
# IMPORTED targets (package config); otherwise ordinary INTERFACE targets
# (visible everywhere in the build, also under add_subdirectory).

find_package(MPI QUIET COMPONENTS CXX)
if(MPI_CXX_FOUND)
  find_path(NKIT_HYPRE_INCLUDE_DIR HYPRE_parcsr_ls.h PATH_SUFFIXES hypre)
  find_library(NKIT_HYPRE_LIBRARY NAMES HYPRE)
endif()

if(MPI_CXX_FOUND AND NOT TARGET nkit::mpi)
  if(NKIT_DISTRIBUTED_IMPORTED)
    add_library(nkit::mpi INTERFACE IMPORTED)
    set_target_properties(nkit::mpi PROPERTIES INTERFACE_LINK_LIBRARIES "nkit::nkit;MPI::MPI_CXX")
  else()
    add_library(nkit_mpi INTERFACE)
    add_library(nkit::mpi ALIAS nkit_mpi)
    target_link_libraries(nkit_mpi INTERFACE nkit::nkit MPI::MPI_CXX)
  endif()
endif()

if(TARGET nkit::mpi AND NKIT_HYPRE_INCLUDE_DIR AND NKIT_HYPRE_LIBRARY AND NOT TARGET nkit::hypre)
  if(NKIT_DISTRIBUTED_IMPORTED)
    add_library(nkit::hypre INTERFACE IMPORTED)
    set_target_properties(nkit::hypre PROPERTIES INTERFACE_LINK_LIBRARIES "nkit::mpi;${NKIT_HYPRE_LIBRARY}"
                                                 INTERFACE_INCLUDE_DIRECTORIES "${NKIT_HYPRE_INCLUDE_DIR}")
  else()
    add_library(nkit_hypre INTERFACE)
    add_library(nkit::hypre ALIAS nkit_hypre)
    target_link_libraries(nkit_hypre INTERFACE nkit::mpi ${NKIT_HYPRE_LIBRARY})
    target_include_directories(nkit_hypre SYSTEM INTERFACE ${NKIT_HYPRE_INCLUDE_DIR})
  endif()
endif()

set(nkit_mpi_FOUND FALSE)
set(nkit_hypre_FOUND FALSE)
if(TARGET nkit::mpi)
  set(nkit_mpi_FOUND TRUE)
endif()
if(TARGET nkit::hypre)
  set(nkit_hypre_FOUND TRUE)
endif()
