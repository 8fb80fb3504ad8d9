#pragma once
// The PIV stack as a folder of text frames (README, "Input formats"): one file
// frame_NNNNNN.txt per frame with the lines `x y u v valid` (lab-frame metres,
// velocities in the stack's units) and index.csv `frame,file,time_s`. Written
// from the HDF5 stack a chunk of frames at a time, with every number printed
// so it reads back to the same float, so the piv stage sees the same frames
// from either layout.
#include <cstdint>
#include <filesystem>

namespace stallscope::synth {

// Returns the number of frames written.
std::int64_t write_text_frames(const std::filesystem::path& stack, const std::filesystem::path& folder);

}  // namespace stallscope::synth
