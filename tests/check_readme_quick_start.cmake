# Fails when the README's quick-start code block differs from examples/quick_start/main.cpp.
file(READ ${README} readme)
file(READ ${EXAMPLE} example)
string(FIND "${readme}" "${example}" position)
if(position EQUAL -1)
  message(FATAL_ERROR "README.md's quick start no longer matches ${EXAMPLE}; copy one into the other")
endif()
