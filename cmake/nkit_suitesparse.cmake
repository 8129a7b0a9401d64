# Optional SuiteSparse (UMFPACK, KLU) for include/nkit/preconditioners/suitesparse_direct.hpp.
# When the headers and libraries are found, defines the INTERFACE target nkit_suitesparse, which adds
# NKIT_HAS_SUITESPARSE=1, the include directory and the libraries; nkit's tests and benchmarks link it
# when it exists. Everything else builds without it.

find_path(NKIT_UMFPACK_INCLUDE_DIR umfpack.h PATH_SUFFIXES suitesparse)
find_path(NKIT_KLU_INCLUDE_DIR klu.h PATH_SUFFIXES suitesparse)
set(nkit_suitesparse_libraries umfpack klu btf amd colamd cholmod suitesparseconfig)
set(nkit_suitesparse_found TRUE)
if(NOT NKIT_UMFPACK_INCLUDE_DIR OR NOT NKIT_KLU_INCLUDE_DIR)
  set(nkit_suitesparse_found FALSE)
endif()
set(nkit_suitesparse_paths)
foreach(library IN LISTS nkit_suitesparse_libraries)
  find_library(NKIT_SUITESPARSE_${library}_LIBRARY ${library})
  if(NKIT_SUITESPARSE_${library}_LIBRARY)
    list(APPEND nkit_suitesparse_paths ${NKIT_SUITESPARSE_${library}_LIBRARY})
  else()
    set(nkit_suitesparse_found FALSE)
  endif()
endforeach()

if(nkit_suitesparse_found)
  add_library(nkit_suitesparse INTERFACE)
  target_include_directories(nkit_suitesparse INTERFACE ${NKIT_UMFPACK_INCLUDE_DIR} ${NKIT_KLU_INCLUDE_DIR})
  target_link_libraries(nkit_suitesparse INTERFACE ${nkit_suitesparse_paths})
  target_compile_definitions(nkit_suitesparse INTERFACE NKIT_HAS_SUITESPARSE=1)
  message(STATUS "nkit: SuiteSparse found (UMFPACK and KLU preconditioners are built and tested)")
else()
  message(STATUS "nkit: SuiteSparse not found; suitesparse_direct.hpp is skipped (install libsuitesparse-dev)")
endif()
