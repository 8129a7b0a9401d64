// Definitions for tests/support/allocation_counter.hpp: a replacement of the
// global operator new that counts allocations while a counting_scope is
// alive, and a check that the counter itself works.
#include <atomic>
#include <catch2/catch.hpp>
#include <cstdlib>
#include <new>
#include <vector>

#include "support/allocation_counter.hpp"

namespace nkit_test {
std::atomic<bool> counting_allocations{false};
std::atomic<std::size_t> allocation_count{0};
}  // namespace nkit_test

// Every non-aligned form is replaced, so that allocation and release always
// pair malloc with free (sanitizers check the pairing).
namespace {
void* counted_allocation(std::size_t size) noexcept {
  if (nkit_test::counting_allocations.load(std::memory_order_relaxed)) ++nkit_test::allocation_count;
  return std::malloc(size == 0 ? 1 : size);
}
}  // namespace

void* operator new(std::size_t size) {
  if (void* memory = counted_allocation(size)) return memory;
  throw std::bad_alloc();
}
void* operator new[](std::size_t size) {
  if (void* memory = counted_allocation(size)) return memory;
  throw std::bad_alloc();
}
void* operator new(std::size_t size, const std::nothrow_t&) noexcept { return counted_allocation(size); }
void* operator new[](std::size_t size, const std::nothrow_t&) noexcept { return counted_allocation(size); }
void operator delete(void* memory) noexcept { std::free(memory); }
void operator delete[](void* memory) noexcept { std::free(memory); }
void operator delete(void* memory, std::size_t) noexcept { std::free(memory); }
void operator delete[](void* memory, std::size_t) noexcept { std::free(memory); }
void operator delete(void* memory, const std::nothrow_t&) noexcept { std::free(memory); }
void operator delete[](void* memory, const std::nothrow_t&) noexcept { std::free(memory); }

TEST_CASE("the allocation counter sees heap allocations", "[allocation]") {
  nkit_test::counting_scope scope;
  std::vector<double> values(16);  // one allocation (definition of std::vector's storage)
  CHECK(scope.count() >= 1);
}
