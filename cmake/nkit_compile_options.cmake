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
