# Optional single-purpose targets, detected at configure time. Used twice: by
# nkit's own build and, installed beside nkitConfig.cmake, by a consumer's
# find_package(nkit), so both see the same targets:
#   nkit::json    nkit::nkit + nlohmann::json (Debian: nlohmann-json3-dev), for
#                 report_json.hpp; defines NKIT_HAS_JSON=1. Created only when
#                 nlohmann_json is found.
#   nkit::openmp  nkit::nkit + OpenMP + the define NKIT_USE_OPENMP: the
#                 element-wise and reduction members of eigen_vector_space run
#                 on OpenMP threads for long vectors (eigen_vector_space.hpp).
#                 Created only when OpenMP is found.
# The main target nkit::nkit never depends on either.
# With IMPORTED targets the consumer's project must find nlohmann_json / OpenMP
# itself through this file, which it does (find_package below).
# Set NKIT_OPTIONAL_IMPORTED to ON before including this file to create
# IMPORTED targets (package config); otherwise ordinary INTERFACE targets.

find_package(nlohmann_json 3 QUIET)
if(nlohmann_json_FOUND AND NOT TARGET nkit::json)
  if(NKIT_OPTIONAL_IMPORTED)
    add_library(nkit::json INTERFACE IMPORTED)
    set_target_properties(nkit::json PROPERTIES INTERFACE_LINK_LIBRARIES "nkit::nkit;nlohmann_json::nlohmann_json"
                                                INTERFACE_COMPILE_DEFINITIONS "NKIT_HAS_JSON=1")
  else()
    add_library(nkit_json INTERFACE)
    add_library(nkit::json ALIAS nkit_json)
    target_link_libraries(nkit_json INTERFACE nkit::nkit nlohmann_json::nlohmann_json)
    target_compile_definitions(nkit_json INTERFACE NKIT_HAS_JSON=1)
  endif()
endif()

find_package(OpenMP QUIET COMPONENTS CXX)
if(OpenMP_CXX_FOUND AND NOT TARGET nkit::openmp)
  if(NKIT_OPTIONAL_IMPORTED)
    add_library(nkit::openmp INTERFACE IMPORTED)
    set_target_properties(nkit::openmp PROPERTIES INTERFACE_LINK_LIBRARIES "nkit::nkit;OpenMP::OpenMP_CXX"
                                                  INTERFACE_COMPILE_DEFINITIONS "NKIT_USE_OPENMP=1")
  else()
    add_library(nkit_openmp INTERFACE)
    add_library(nkit::openmp ALIAS nkit_openmp)
    target_link_libraries(nkit_openmp INTERFACE nkit::nkit OpenMP::OpenMP_CXX)
    target_compile_definitions(nkit_openmp INTERFACE NKIT_USE_OPENMP=1)
  endif()
endif()

set(nkit_json_FOUND FALSE)
set(nkit_openmp_FOUND FALSE)
if(TARGET nkit::json)
  set(nkit_json_FOUND TRUE)
endif()
if(TARGET nkit::openmp)
  set(nkit_openmp_FOUND TRUE)
endif()
