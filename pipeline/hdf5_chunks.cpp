#include "pipeline/hdf5_chunks.hpp"

#include <libdeflate.h>

#include <cstring>
#include <memory>

#include "pipeline/hdf5.hpp"

namespace stallscope::h5 {

bool chunk_coding(hid_t dataset, ChunkCoding& coding) {
  Id dcpl(H5Dget_create_plist(dataset));
  Id type(H5Dget_type(dataset));
  if (!dcpl || !type || H5Pget_layout(dcpl.get()) != H5D_CHUNKED || H5Tequal(type.get(), H5T_IEEE_F64LE) <= 0)
    return false;
  coding = {};
  const int filters = H5Pget_nfilters(dcpl.get());
  for (int i = 0; i < filters; ++i) {
    unsigned flags = 0, values[8] = {};
    std::size_t n_values = 8;
    const H5Z_filter_t id = H5Pget_filter2(dcpl.get(), static_cast<unsigned>(i), &flags, &n_values, values, 0,
                                           nullptr, nullptr);
    // Shuffle first, deflate after it, nothing else (written in that order, read back reversed).
    if (id == H5Z_FILTER_SHUFFLE && i == 0) coding.shuffled = true;
    else if (id == H5Z_FILTER_DEFLATE && !coding.deflated) coding.deflated = true;
    else return false;
  }
  return true;
}

namespace {

struct DecompressorDeleter {
  void operator()(libdeflate_decompressor* d) const { libdeflate_free_decompressor(d); }
};

// The shuffle filter stores byte b of every element together, plane after plane.
void unshuffle_doubles(const unsigned char* planes, unsigned char* out, std::size_t elements) {
  constexpr std::size_t kBytes = sizeof(double);
  for (std::size_t i = 0; i < elements; ++i)
    for (std::size_t b = 0; b < kBytes; ++b) out[i * kBytes + b] = planes[b * elements + i];
}

}  // namespace

bool decode_chunk(const ChunkCoding& coding, unsigned filter_mask, const std::vector<unsigned char>& raw,
                  unsigned char* out, std::size_t out_bytes, std::vector<unsigned char>& scratch) {
  // A set bit i of the mask: filter i was skipped for this chunk.
  const bool shuffled = coding.shuffled && !(filter_mask & 1u);
  const bool deflated = coding.deflated && !(filter_mask & (coding.shuffled ? 2u : 1u));
  unsigned char* inflated = shuffled ? (scratch.resize(out_bytes), scratch.data()) : out;
  if (deflated) {
    thread_local std::unique_ptr<libdeflate_decompressor, DecompressorDeleter> d(libdeflate_alloc_decompressor());
    // A null actual size asks for exactly out_bytes: anything else is damage.
    if (!d || libdeflate_zlib_decompress(d.get(), raw.data(), raw.size(), inflated, out_bytes, nullptr) !=
                  LIBDEFLATE_SUCCESS)
      return false;
  } else {
    if (raw.size() != out_bytes) return false;
    std::memcpy(inflated, raw.data(), out_bytes);
  }
  if (shuffled) {
    if (out_bytes % sizeof(double) != 0) return false;
    unshuffle_doubles(inflated, out, out_bytes / sizeof(double));
  }
  return true;
}

}  // namespace stallscope::h5
