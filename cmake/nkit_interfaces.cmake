# The compiled interfaces beside the header-only core:
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

# Installed package: nkit::c and nkit::fortran (find_package(nkit COMPONENTS c
# fortran) requires them). nkitInterfaceDependencies.cmake finds what they link.
if(TARGET nkit_c)
  install(EXPORT nkitInterfaceTargets NAMESPACE nkit:: DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/nkit)
  set(nkit_interface_dependencies "include(CMakeFindDependencyMacro)\n")
  if(NKIT_C_INTERFACE_USES_MPI)
    string(APPEND nkit_interface_dependencies "find_dependency(MPI COMPONENTS CXX)\n")
  endif()
  file(WRITE ${CMAKE_CURRENT_BINARY_DIR}/nkitInterfaceDependencies.cmake "${nkit_interface_dependencies}")
  install(FILES ${CMAKE_CURRENT_BINARY_DIR}/nkitInterfaceDependencies.cmake
          DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/nkit)
endif()
