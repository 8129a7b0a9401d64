// Catch2's main(); compiled once and linked into the test executable.
#define CATCH_CONFIG_MAIN
#include <catch2/catch.hpp>
