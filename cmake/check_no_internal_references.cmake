# Fails when the project points readers at the team's private notes instead of
# citing a published source (authors, year, title, table or equation) or
# copying the definition into the project. Looks, case-insensitively, for
#   "shared" + " references", "references" + " §" and "../" + "shared/"
# in README.md, DEVELOPERS.md and every text file under docs/, include/,
# examples/, problems/, tests/, bench/, interfaces/ and cmake/, and names each
# hit as file:line. The patterns are assembled from pieces so that this file
# does not match itself.
#   Run: cmake -DSOURCE_DIR=<project> -P check_no_internal_references.cmake
cmake_minimum_required(VERSION 3.16)
if(NOT SOURCE_DIR)
  message(FATAL_ERROR "check_no_internal_references.cmake: pass -DSOURCE_DIR=<project folder>")
endif()

set(word "references")
set(folder_name "shared")
set(patterns "${folder_name} ${word}" "${word} §" "../${folder_name}/")

set(folders docs include examples problems tests bench interfaces cmake)
set(files ${SOURCE_DIR}/README.md ${SOURCE_DIR}/DEVELOPERS.md)
foreach(folder IN LISTS folders)
  file(GLOB_RECURSE found LIST_DIRECTORIES false ${SOURCE_DIR}/${folder}/*)
  list(APPEND files ${found})
endforeach()
# Binary files (pictures, the fuzzers' input corpora) hold no prose.
list(FILTER files EXCLUDE REGEX "\\.(png|jpe?g|gif|pdf|ico|gz|zip)$")
list(FILTER files EXCLUDE REGEX "/tests/fuzz/corpus[^/]*/")

string(ASCII 28 stand_in_backslash)
string(ASCII 29 stand_in_semicolon)
string(ASCII 30 stand_in_open)
string(ASCII 31 stand_in_close)

set(hits "")
set(scanned 0)
foreach(path IN LISTS files)
  if(NOT EXISTS ${path})
    continue()
  endif()
  math(EXPR scanned "${scanned} + 1")
  file(READ ${path} content)
  string(TOLOWER "${content}" lowered)
  set(matched FALSE)
  foreach(pattern IN LISTS patterns)
    string(FIND "${lowered}" "${pattern}" at)
    if(NOT at EQUAL -1)
      set(matched TRUE)
    endif()
  endforeach()
  if(NOT matched)
    continue()
  endif()
  # Split into lines for the line numbers. ';', '\\' and brackets would
  # disturb CMake's list splitting: they stand in as control characters
  # (one byte each, so positions hold) until a line is shown.
  foreach(text IN ITEMS content lowered)
    string(REPLACE "\\" "${stand_in_backslash}" ${text} "${${text}}")
    string(REPLACE ";" "${stand_in_semicolon}" ${text} "${${text}}")
    string(REPLACE "[" "${stand_in_open}" ${text} "${${text}}")
    string(REPLACE "]" "${stand_in_close}" ${text} "${${text}}")
  endforeach()
  string(REPLACE "\n" ";" lines "${lowered}")
  string(REPLACE "\n" ";" original_lines "${content}")
  file(RELATIVE_PATH name ${SOURCE_DIR} ${path})
  set(index 0)
  foreach(line IN LISTS lines)
    foreach(pattern IN LISTS patterns)
      string(FIND "${line}" "${pattern}" at)
      if(NOT at EQUAL -1)
        math(EXPR number "${index} + 1")
        # Show about 70 bytes either side of the hit, cut at spaces so that
        # no multi-byte character is split.
        list(GET original_lines ${index} shown)
        string(LENGTH "${shown}" length)
        if(length GREATER 160)
          set(begin 0)
          if(at GREATER 70)
            math(EXPR begin "${at} - 70")
          endif()
          string(SUBSTRING "${shown}" ${begin} 160 shown)
          if(begin GREATER 0)
            string(FIND "${shown}" " " space)
            math(EXPR space "${space} + 1")
            string(SUBSTRING "${shown}" ${space} -1 shown)
            set(shown "... ${shown}")
          endif()
          string(FIND "${shown}" " " space REVERSE)
          string(SUBSTRING "${shown}" 0 ${space} shown)
          set(shown "${shown} ...")
        endif()
        string(STRIP "${shown}" shown)
        string(REPLACE "${stand_in_backslash}" "\\" shown "${shown}")
        string(REPLACE "${stand_in_semicolon}" ";" shown "${shown}")
        string(REPLACE "${stand_in_open}" "[" shown "${shown}")
        string(REPLACE "${stand_in_close}" "]" shown "${shown}")
        string(APPEND hits "  ${name}:${number}: ${shown}\n")
        break()
      endif()
    endforeach()
    math(EXPR index "${index} + 1")
  endforeach()
endforeach()

if(hits)
  message(FATAL_ERROR
          "lines that point to private team notes; cite the published source or copy the definition instead:\n"
          "${hits}")
endif()
message(STATUS "no pointers to private team notes in ${scanned} files")
