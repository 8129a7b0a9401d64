# Compile options for nkit's own tests, examples and benchmarks (never imposed
# on users of the nkit::nkit target).

add_library(nkit_compile_options INTERFACE)
target_compile_options(nkit_compile_options INTERFACE -Wall -Wextra -Wpedantic)
if(NKIT_WARNINGS_AS_ERRORS)
  target_compile_options(nkit_compile_options INTERFACE -Werror)
endif()
if(NKIT_NATIVE)
  target_compile_options(nkit_compile_options INTERFACE -march=native)
endif()
if(NKIT_SANITIZE)
  target_compile_options(nkit_compile_options INTERFACE -fsanitize=${NKIT_SANITIZE} -fno-omit-frame-pointer
                                                        -fno-sanitize-recover=all)
  target_link_options(nkit_compile_options INTERFACE -fsanitize=${NKIT_SANITIZE})
endif()

# nkit_add_program(<name> <sources...>): an executable linked to nkit with the options above.
# With NKIT_USE_OPENMP=ON the programs link nkit::openmp instead (same headers,
# OpenMP vector operations).
function(nkit_add_program name)
  add_executable(${name} ${ARGN})
  target_link_libraries(${name} PRIVATE nkit::nkit nkit_compile_options)
  if(NKIT_USE_OPENMP)
    target_link_libraries(${name} PRIVATE nkit::openmp)
  endif()
endfunction()

# nkit_optimize_under_sanitizers(<target> <sources...>): CI's sanitizer build is
# unoptimised (-O0 compiles about 3x faster under AddressSanitizer), but sources whose
# checks do real numerical work (fine grids, many solves) would then run 5-20x slower.
# In a sanitizer build the listed sources of <target> move into an object library
# <target>_optimized, compiled with the target's own options, include folders and
# libraries plus -O2 (last on the command line, so it wins), whose objects come first on
# the target's link line. The order matters: the templates they share with the other
# sources (Eigen's factorisations, nkit's solvers) are emitted in every object file, and
# the linker keeps the first copy it meets; with the -O2 objects first, the -O2 copies are
# the ones that run (measured: the cavity at Re = 100 took 84 s with the -O0 copies, 4.4 s
# with the -O2 ones). The other sources go into <target>_unoptimized, linked after it, so
# the order holds with any generator and with batched sources (NKIT_BATCH_TEST_SOURCES).
# Call it after the target's libraries, include folders and options are set. Paths are relative to the calling folder, which must be the
# one that created <target>.
function(nkit_optimize_under_sanitizers target)
  if(NOT NKIT_SANITIZE)
    return()
  endif()
  set(listed)
  foreach(source IN LISTS ARGN)
    get_filename_component(path ${source} ABSOLUTE BASE_DIR ${CMAKE_CURRENT_SOURCE_DIR})
    list(APPEND listed ${path})
  endforeach()
  get_target_property(sources ${target} SOURCES)
  set(first)
  set(rest)
  foreach(source IN LISTS sources)
    set(path ${source})
    if(NOT source MATCHES "^\\$<")
      get_filename_component(path ${source} ABSOLUTE BASE_DIR ${CMAKE_CURRENT_SOURCE_DIR})
    endif()
    if(path IN_LIST listed)
      list(APPEND first ${path})
      list(REMOVE_ITEM listed ${path})
    else()
      list(APPEND rest ${source})
    endif()
  endforeach()
  if(listed)
    message(FATAL_ERROR "nkit_optimize_under_sanitizers: not sources of ${target}: ${listed}")
  endif()
  # Both halves become object libraries: the Makefile generator links a target's own objects
  # before the objects it takes from elsewhere, Ninja the other way round, so only a target
  # made of object libraries alone has a link order that does not depend on the generator.
  set(unoptimized_sources)
  set(external)
  foreach(source IN LISTS rest)
    if(source MATCHES "^\\$<")
      list(APPEND external ${source})
    else()
      list(APPEND unoptimized_sources ${source})
    endif()
  endforeach()
  set(halves ${target}_optimized)
  if(unoptimized_sources)
    list(APPEND halves ${target}_unoptimized)
  endif()
  get_target_property(batched ${target} UNITY_BUILD)
  foreach(half IN LISTS halves)
    if(half STREQUAL "${target}_optimized")
      add_library(${half} OBJECT ${first})
      target_compile_options(${half} PRIVATE -O2)
    else()
      add_library(${half} OBJECT ${unoptimized_sources})
    endif()
    foreach(property LINK_LIBRARIES INCLUDE_DIRECTORIES COMPILE_DEFINITIONS COMPILE_OPTIONS)
      get_target_property(value ${target} ${property})
      if(value)
        set_property(TARGET ${half} APPEND PROPERTY ${property} ${value})
      endif()
    endforeach()
    if(batched)
      get_target_property(batch_size ${target} UNITY_BUILD_BATCH_SIZE)
      set_target_properties(${half} PROPERTIES UNITY_BUILD ON UNITY_BUILD_BATCH_SIZE ${batch_size})
    endif()
  endforeach()
  set(objects)
  foreach(half IN LISTS halves)
    list(APPEND objects $<TARGET_OBJECTS:${half}>)
  endforeach()
  set_property(TARGET ${target} PROPERTY SOURCES ${objects} ${external})
  set_property(TARGET ${target} PROPERTY LINKER_LANGUAGE CXX)
endfunction()

# nkit_add_header_checks(<target> HEADERS <headers...> LIBRARIES <libraries...>): every
# header compiles on its own. One generated translation unit per header, including it
# twice (the second time checks the include guard), built as the object library <target>
# with <libraries> and the project's warnings. Headers are named as code includes them
# (<nkit/...> or <problems/...>).
function(nkit_add_header_checks target)
  cmake_parse_arguments(PARSE_ARGV 1 arg "" "" "HEADERS;LIBRARIES")
  set(units)
  foreach(header IN LISTS arg_HEADERS)
    string(MAKE_C_IDENTIFIER ${header} unit)
    set(unit_file ${CMAKE_CURRENT_BINARY_DIR}/header_units/${unit}.cpp)
    file(CONFIGURE OUTPUT ${unit_file} CONTENT "#include <${header}>\n#include <${header}>  // include guard works\n")
    list(APPEND units ${unit_file})
  endforeach()
  add_library(${target} OBJECT ${units})
  target_link_libraries(${target} PRIVATE ${arg_LIBRARIES} nkit_compile_options)
endfunction()
