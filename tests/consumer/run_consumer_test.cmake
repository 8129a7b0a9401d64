# Builds and runs tests/consumer against nkit: either installed into a
# temporary prefix (MODE=find_package) or embedded (MODE=add_subdirectory).
# WITH_MPI=ON builds and runs the MPI consumer (nkit::mpi) instead of the plain one;
# WITH_INTERFACES=ON a C and a Fortran consumer (nkit::c, nkit::fortran).
file(REMOVE_RECURSE ${WORK_DIR})
file(MAKE_DIRECTORY ${WORK_DIR})

function(run)
  execute_process(COMMAND ${ARGN} RESULT_VARIABLE result OUTPUT_VARIABLE output ERROR_VARIABLE output)
  if(NOT result EQUAL 0)
    message(FATAL_ERROR "command failed (${result}): ${ARGN}\n${output}")
  endif()
  message(STATUS "${output}")
endfunction()

if(NOT DEFINED WITH_MPI)
  set(WITH_MPI OFF)
endif()
if(NOT DEFINED WITH_INTERFACES)
  set(WITH_INTERFACES OFF)
endif()
set(configure_args -S ${NKIT_SOURCE_DIR}/tests/consumer -B ${WORK_DIR}/build -DCMAKE_CXX_COMPILER=${CXX_COMPILER}
                   -DNKIT_CONSUMER_MODE=${MODE} -DNKIT_SOURCE_DIR=${NKIT_SOURCE_DIR}
                   -DNKIT_CONSUMER_WITH_MPI=${WITH_MPI} -DNKIT_CONSUMER_WITH_INTERFACES=${WITH_INTERFACES})
if(WITH_INTERFACES)
  list(APPEND configure_args -DCMAKE_C_COMPILER=${C_COMPILER} -DCMAKE_Fortran_COMPILER=${Fortran_COMPILER})
endif()
if(MODE STREQUAL "find_package")
  run(${CMAKE_COMMAND} --install ${NKIT_BINARY_DIR} --prefix ${WORK_DIR}/prefix)
  list(APPEND configure_args -DCMAKE_PREFIX_PATH=${WORK_DIR}/prefix)
endif()
run(${CMAKE_COMMAND} ${configure_args})
run(${CMAKE_COMMAND} --build ${WORK_DIR}/build)
if(NOT WITH_MPI AND NOT WITH_INTERFACES)
  run(${WORK_DIR}/build/consumer)
endif()
if(WITH_MPI)
  run(${WORK_DIR}/build/consumer_mpi)
endif()
if(WITH_INTERFACES)
  run(${WORK_DIR}/build/consumer_c)
  run(${WORK_DIR}/build/consumer_fortran)
endif()
