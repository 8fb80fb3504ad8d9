#pragma once
// Chunks of a shuffled, deflated dataset of doubles decoded here rather than
// by libhdf5's filter pipeline: libdeflate inflates a whole chunk two to three
// times as fast as zlib's stream, and the shuffle is undone in one pass.
#include <hdf5.h>

#include <cstddef>
#include <vector>

namespace stallscope::h5 {

// How a dataset's chunks are stored, when this decoder can read them.
struct ChunkCoding {
  bool shuffled = false, deflated = false;
};

// The coding of a chunked little-endian double dataset whose pipeline holds
// only shuffle then deflate (each optional); false for anything else, which
// libhdf5 reads itself.
bool chunk_coding(hid_t dataset, ChunkCoding& coding);

// Decodes one stored chunk (raw: its bytes, filter_mask from H5Dread_chunk)
// into out, which holds exactly the chunk's bytes. False when the bytes do
// not decode to that size (a damaged chunk: the caller lets libhdf5 report it).
bool decode_chunk(const ChunkCoding& coding, unsigned filter_mask, const std::vector<unsigned char>& raw,
                  unsigned char* out, std::size_t out_bytes, std::vector<unsigned char>& scratch);

}  // namespace stallscope::h5
