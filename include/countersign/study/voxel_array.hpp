#pragma once

// Storage for whole-volume arrays (CT numbers, masks): a std::vector whose allocator (1) does not
// zero-fill on resize, since the reader writes every element anyway, and (2) asks Linux for
// transparent huge pages for large blocks, so that filling a 50 MB volume takes about a hundred
// page faults instead of about twelve thousand. Behaves as std::vector otherwise.

#include <cstddef>
#include <cstdlib>
#include <new>
#include <type_traits>
#include <vector>

namespace countersign::study {

namespace detail {
// Large blocks are 2 MiB-aligned and advised for huge pages; small ones come from operator new.
[[nodiscard]] void* allocate_voxels(std::size_t bytes);
void free_voxels(void* block, std::size_t bytes) noexcept;
}  // namespace detail

template <class T>
class VoxelAllocator {
 public:
  using value_type = T;
  VoxelAllocator() = default;
  template <class U>
  VoxelAllocator(const VoxelAllocator<U>&) noexcept {}  // NOLINT(google-explicit-constructor)

  [[nodiscard]] T* allocate(std::size_t n) { return static_cast<T*>(detail::allocate_voxels(n * sizeof(T))); }
  void deallocate(T* p, std::size_t n) noexcept { detail::free_voxels(p, n * sizeof(T)); }

  // Default-initialise (no zero fill) when constructed without a value.
  template <class U>
  void construct(U* p) noexcept(std::is_nothrow_default_constructible_v<U>) {
    ::new (static_cast<void*>(p)) U;
  }
  template <class U, class... Args>
  void construct(U* p, Args&&... args) {
    ::new (static_cast<void*>(p)) U(std::forward<Args>(args)...);
  }

  friend bool operator==(const VoxelAllocator&, const VoxelAllocator&) { return true; }
};

template <class T>
using VoxelArray = std::vector<T, VoxelAllocator<T>>;

}  // namespace countersign::study
