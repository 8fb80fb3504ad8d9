#include "pipeline/allocator.hpp"

#if defined(__GLIBC__)
#include <malloc.h>
#endif

namespace stallscope {

void keep_large_blocks_for_reuse() {
#if defined(__GLIBC__)
  // glibc's own dynamic threshold stops at 32 MB, below one record.
  constexpr int kLarge = 1 << 30;
  mallopt(M_MMAP_THRESHOLD, kLarge);
  mallopt(M_TRIM_THRESHOLD, kLarge);
#endif
}

}  // namespace stallscope
