# Fails when a quoted include crosses the lines drawn in problems/README.md:
#   include/nkit/ (the library) includes nothing from problems/, examples/, tests/ or bench/;
#   problems/ includes nothing from examples/, tests/ or bench/;
#   bench/ includes nothing from examples/ or tests/;
#   examples/ include nothing from tests/ or bench/.
# Quoted includes resolve against the including file's folder, the project
# folder (target nkit_problems) or a program's own folder, so both the
# project-relative spelling ("tests/support/x.hpp") and the folder-relative
# ones of each forbidden tree ("support/", "mpi/" for tests; "common/" for
# examples) are looked for. Run: cmake -DSOURCE_DIR=<project> -P check_includes.cmake
set(rules
    "include/nkit|problems/|examples/|tests/|bench/|common/|support/"
    "problems|examples/|tests/|bench/|common/|support/|mpi/"
    "bench|examples/|tests/|common/|support/|mpi/"
    "examples|tests/|bench/|support/|mpi/")
set(violations "")
foreach(rule IN LISTS rules)
  string(REPLACE "|" ";" parts "${rule}")
  list(POP_FRONT parts folder)
  file(GLOB_RECURSE sources ${SOURCE_DIR}/${folder}/*.hpp ${SOURCE_DIR}/${folder}/*.cpp)
  foreach(source IN LISTS sources)
    file(STRINGS ${source} includes REGEX "^[ \t]*#[ \t]*include[ \t]*\"")
    foreach(line IN LISTS includes)
      foreach(forbidden IN LISTS parts)
        if(line MATCHES "\"${forbidden}")
          file(RELATIVE_PATH name ${SOURCE_DIR} ${source})
          string(APPEND violations "  ${name}: ${line}\n")
        endif()
      endforeach()
    endforeach()
  endforeach()
endforeach()
if(violations)
  message(FATAL_ERROR "includes that cross the problem-library lines (problems/README.md):\n${violations}")
endif()
message(STATUS "include lines between the library, problems/, examples/, tests/ and bench/ hold")
