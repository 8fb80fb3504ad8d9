#pragma once
// How the process's allocator treats the large blocks a run lives on.
#include <memory>
#include <utility>

namespace stallscope {

// A run allocates and frees records of tens of MB stage after stage (a 48-tap,
// 2-minute DAQ record is 46 MB a copy). glibc maps each such block fresh and
// returns it on free, so every stage pays the kernel to fault in and zero its
// pages again; this keeps large blocks in the heap for reuse instead. Peak
// memory is unchanged; memory is given back at exit. Call once, first thing.
void keep_large_blocks_for_reuse();

// An allocator whose resize(n) leaves new numbers unset (std::allocator zeroes
// them), for arrays whose every element the code writes next anyway.
template <typename T>
struct UnsetOnResize : std::allocator<T> {
  template <typename U>
  struct rebind {
    using other = UnsetOnResize<U>;
  };
  UnsetOnResize() = default;
  template <typename U>
  UnsetOnResize(const UnsetOnResize<U>&) noexcept {}
  template <typename U>
  void construct(U* p) noexcept {
    ::new (static_cast<void*>(p)) U;
  }
  template <typename U, typename... Args>
  void construct(U* p, Args&&... args) {
    ::new (static_cast<void*>(p)) U(std::forward<Args>(args)...);
  }
};

}  // namespace stallscope
