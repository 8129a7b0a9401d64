# The compiled interfaces beside the header-only core (issue 16):
#   interfaces/c        library nkit_c (alias nkit::c): the C interface, nkit_c.h
#   interfaces/fortran  library nkit_fortran (alias nkit::fortran): Fortran 2003
#                       module `nkit` over the C interface (iso_c_binding)
# Each is on by default and built when its compiler is available: the C
# library itself is C++, but its tests and the C migration example need a C
# compiler; the Fortran module needs a Fortran compiler (Debian: gfortran).
# Languages are enabled here, at the top level, because examples/ uses them too.
include(CheckLanguage)
if(NKIT_BUILD_C_INTERFACE)
  check_language(C)
  if(CMAKE_C_COMPILER)
    enable_language(C)
  endif()
  add_subdirectory(interfaces/c)
  if(NKIT_BUILD_FORTRAN_INTERFACE)
    check_language(Fortran)
    if(CMAKE_Fortran_COMPILER)
      enable_language(Fortran)
      add_subdirectory(interfaces/fortran)
    else()
      message(STATUS "nkit: no Fortran compiler: the Fortran interface is skipped (install gfortran)")
    endif()
  endif()
endif()
