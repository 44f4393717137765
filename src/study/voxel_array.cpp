#include <countersign/study/voxel_array.hpp>

#include <sys/mman.h>

namespace countersign::study::detail {

namespace {
constexpr std::size_t huge_page_bytes = std::size_t{2} << 20;
constexpr std::size_t large_block_bytes = std::size_t{4} << 20;
}  // namespace

void* allocate_voxels(std::size_t bytes) {
  if (bytes < large_block_bytes) return ::operator new(bytes);
  const std::size_t rounded = (bytes + huge_page_bytes - 1) / huge_page_bytes * huge_page_bytes;
  void* block = std::aligned_alloc(huge_page_bytes, rounded);
  if (block == nullptr) throw std::bad_alloc();
  // Advice only: without transparent huge pages the block works the same, with more page faults.
  (void)::madvise(block, rounded, MADV_HUGEPAGE);
  return block;
}

void free_voxels(void* block, std::size_t bytes) noexcept {
  if (bytes < large_block_bytes) {
    ::operator delete(block);
    return;
  }
  std::free(block);
}

}  // namespace countersign::study::detail
