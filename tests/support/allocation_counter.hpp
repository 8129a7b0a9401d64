// Counts heap allocations made through the global operator new while a
// counting_scope is alive (definitions in test_allocation.cpp).
#ifndef NKIT_TESTS_SUPPORT_ALLOCATION_COUNTER_HPP
#define NKIT_TESTS_SUPPORT_ALLOCATION_COUNTER_HPP

#include <atomic>
#include <cstddef>

namespace nkit_test {

extern std::atomic<bool> counting_allocations;
extern std::atomic<std::size_t> allocation_count;

/// Counts allocations between construction and count().
class counting_scope {
 public:
  counting_scope() {
    allocation_count = 0;
    counting_allocations = true;
  }
  ~counting_scope() { counting_allocations = false; }
  std::size_t count() const { return allocation_count.load(); }
  counting_scope(const counting_scope&) = delete;
  counting_scope& operator=(const counting_scope&) = delete;
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_ALLOCATION_COUNTER_HPP
