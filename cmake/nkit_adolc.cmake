# Optional ADOL-C (libadolc-dev) for include/nkit/sensitivity/reverse_mode_product.hpp: matrix-free
# transposed products R'(u)^T w by reverse-mode AD. The option NKIT_WITH_ADOLC defaults to ON exactly
# when the header and library are found; ON without them is an error. When on, defines the INTERFACE
# target nkit_adolc (NKIT_HAS_ADOLC=1, ADOL-C's include directory as a SYSTEM directory so that its
# headers are held to their own warning level, and the library), which nkit's tests link.

find_path(NKIT_ADOLC_INCLUDE_DIR adolc/adolc.h)
find_library(NKIT_ADOLC_LIBRARY adolc)
set(nkit_adolc_found FALSE)
if(NKIT_ADOLC_INCLUDE_DIR AND NKIT_ADOLC_LIBRARY)
  set(nkit_adolc_found TRUE)
endif()
option(NKIT_WITH_ADOLC "Build and test the ADOL-C reverse-mode transposed product" ${nkit_adolc_found})
if(NKIT_WITH_ADOLC AND NOT nkit_adolc_found)
  message(FATAL_ERROR "nkit: NKIT_WITH_ADOLC is ON but ADOL-C was not found (install libadolc-dev)")
endif()
if(NKIT_WITH_ADOLC)
  add_library(nkit_adolc INTERFACE)
  target_include_directories(nkit_adolc SYSTEM INTERFACE ${NKIT_ADOLC_INCLUDE_DIR})
  target_link_libraries(nkit_adolc INTERFACE ${NKIT_ADOLC_LIBRARY})
  target_compile_definitions(nkit_adolc INTERFACE NKIT_HAS_ADOLC=1)
  message(STATUS "nkit: ADOL-C found (reverse-mode transposed products are built and tested)")
else()
  message(STATUS "nkit: ADOL-C not used; reverse_mode_product.hpp is skipped (install libadolc-dev)")
endif()
