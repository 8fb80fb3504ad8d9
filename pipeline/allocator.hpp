#pragma once
// How the process's allocator treats the large blocks a run lives on.

namespace stallscope {

// A run allocates and frees records of tens of MB stage after stage (a 48-tap,
// 2-minute DAQ record is 46 MB a copy). glibc maps each such block fresh and
// returns it on free, so every stage pays the kernel to fault in and zero its
// pages again; this keeps large blocks in the heap for reuse instead. Peak
// memory is unchanged; memory is given back at exit. Call once, first thing.
void keep_large_blocks_for_reuse();

}  // namespace stallscope
