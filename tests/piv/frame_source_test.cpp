// PIV stacks read a chunk at a time, in both layouts, and the layouts' bad
// cases turned into InputErrors naming the file and what was expected.
#include "stages/piv/frame_source.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::piv {
namespace {

using stallscope::testing::ScratchDir;

struct StackSpec {
  std::size_t frames = 5, ny = 3, nx = 4;
  std::vector<double> x = {0.0, 0.1, 0.2, 0.3}, y = {0.0, 0.1, 0.2};
  std::size_t v_frames = 5;
  bool valid = true;
  std::string units = "m/s";
};

std::filesystem::path write_stack(const ScratchDir& dir, const StackSpec& s, const std::string& name = "piv.h5") {
  const auto p = dir / name;
  h5::File f = h5::File::create(p);
  std::vector<float> u(s.frames * s.ny * s.nx), v(s.v_frames * s.ny * s.nx);
  std::vector<std::uint8_t> valid(s.frames * s.ny * s.nx, 1);
  for (std::size_t k = 0; k < u.size(); ++k) u[k] = static_cast<float>(k);
  for (std::size_t k = 0; k < v.size(); ++k) v[k] = -static_cast<float>(k);
  valid[1 * s.ny * s.nx + 5] = 0;
  std::vector<double> t(s.frames);
  for (std::size_t k = 0; k < s.frames; ++k) t[k] = 0.001 * static_cast<double>(k);
  h5::write_floats(f.id(), "piv/u", u.data(), {s.frames, s.ny, s.nx}, s.units);
  h5::write_floats(f.id(), "piv/v", v.data(), {s.v_frames, s.ny, s.nx}, s.units);
  if (s.valid) h5::write_uint8(f.id(), "piv/valid", valid.data(), {s.frames, s.ny, s.nx});
  h5::write_numbers(f.id(), "piv/x_m", s.x.data(), {s.x.size()}, "m");
  h5::write_numbers(f.id(), "piv/y_m", s.y.data(), {s.y.size()}, "m");
  h5::write_numbers(f.id(), "piv/time_s", t.data(), {t.size()}, "s");
  return p;
}

std::string error_of(const std::filesystem::path& p) {
  try {
    open_frame_source(p, "m/s");
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

TEST(Hdf5Stack, ReadsAChunkOfFramesWithoutTheRest) {
  ScratchDir dir;
  auto src = open_frame_source(write_stack(dir, {}), "m/s");
  EXPECT_EQ(src->frames(), 5u);
  EXPECT_EQ(src->grid().nx(), 4u);
  EXPECT_EQ(src->units(), "m/s");
  std::vector<Frame> chunk;
  src->read(1, 2, chunk);
  ASSERT_EQ(chunk.size(), 2u);
  EXPECT_EQ(chunk[0].index, 1u);
  EXPECT_DOUBLE_EQ(chunk[1].camera_time_s, 0.002);
  EXPECT_FLOAT_EQ(chunk[0].u[0], 12.0f);  // frame 1 starts at element 1 x 3 x 4
  EXPECT_FLOAT_EQ(chunk[1].v[11], -35.0f);
  EXPECT_EQ(chunk[0].valid[5], 0);
  EXPECT_EQ(chunk[1].valid[5], 1);
}

TEST(Hdf5Stack, RejectsBadLayoutsWithTheDataset) {
  ScratchDir dir;
  StackSpec bad_axis;
  bad_axis.x = {0.0, 0.1, 0.1, 0.3};
  EXPECT_NE(error_of(write_stack(dir, bad_axis, "a.h5")).find("/piv/x_m is not strictly monotonic at index 2"),
            std::string::npos);
  StackSpec shapes;
  shapes.v_frames = 4;
  EXPECT_NE(error_of(write_stack(dir, shapes, "b.h5")).find("/piv/u is 5 x 3 x 4 but /piv/v is 4 x 3 x 4"),
            std::string::npos);
  StackSpec grid;
  grid.y = {0.0, 0.1, 0.2, 0.3};
  EXPECT_NE(error_of(write_stack(dir, grid, "c.h5")).find("expected frames x ny x nx = 5 x 4 x 4"), std::string::npos);
  StackSpec units;
  units.units = "furlongs";
  EXPECT_NE(error_of(write_stack(dir, units, "d.h5")).find("units = \"m/s\" or \"px/frame\""), std::string::npos);
  EXPECT_NE(error_of(dir.write("e.h5", "not hdf5")).find("not an HDF5 file"), std::string::npos);
  // Decreasing axes are fine (an image's rows often run downward).
  StackSpec down;
  down.y = {0.2, 0.1, 0.0};
  EXPECT_EQ(error_of(write_stack(dir, down, "f.h5")), "(no error)");
}

TEST(TextFrames, ReadTheGridFromTheFirstFrameInAnyRowOrder) {
  ScratchDir dir;
  dir.write("run/index.csv", "frame,file,time_s\n0,f0.txt,0.0\n1,f1.txt,0.5\n");
  dir.write("run/f0.txt", "# x y u v valid\n0 0 1 2 1\n1 0 3 4 1\n2 0 5 6 1\n0 1 7 8 1\n1 1 9 10 0\n2 1 11 12 1\n"
                          "0 2 1 1 1\n1 2 1 1 1\n2 2 1 1 1\n");
  dir.write("run/f1.txt", "2 2 -1 -1\n0 0 -2 -2\n1 1 nan nan\n");  // a sparse frame
  std::vector<std::filesystem::path> opened;
  auto src = open_frame_source(dir / "run", "px/frame", [&](const std::filesystem::path& p) { opened.push_back(p); });
  EXPECT_EQ(src->units(), "px/frame");
  EXPECT_EQ(src->grid().nx(), 3u);
  std::vector<Frame> chunk;
  src->read(0, 2, chunk);
  EXPECT_FLOAT_EQ(chunk[0].u[4], 9.0f);
  EXPECT_EQ(chunk[0].valid[4], 0);
  EXPECT_FLOAT_EQ(chunk[1].u[8], -1.0f);
  EXPECT_EQ(chunk[1].valid[1], 0);  // absent from the file
  EXPECT_TRUE(std::isnan(chunk[1].u[1]));
  EXPECT_EQ(opened.size(), 3u);  // index, f0, f1: every raw file is reported for provenance
}

TEST(TextFrames, RejectBadIndexAndOffGridVectors) {
  ScratchDir dir;
  dir.write("a/index.csv", "frame,time_s\n0,0.0\n");
  EXPECT_NE(error_of(dir / "a").find("expected the header 'frame,file,time_s'"), std::string::npos);
  dir.write("b/index.csv", "frame,file,time_s\n0,f0.txt,0.1\n1,f1.txt,0.1\n");
  EXPECT_NE(error_of(dir / "b").find("frame times must increase"), std::string::npos);
  dir.write("c/index.csv", "frame,file,time_s\n0,f0.txt,0.0\n1,f1.txt,0.1\n");
  dir.write("c/f0.txt", "0 0 1 1\n1 0 1 1\n2 0 1 1\n0 1 1 1\n1 1 1 1\n2 1 1 1\n0 2 1 1\n1 2 1 1\n2 2 1 1\n");
  dir.write("c/f1.txt", "0 0 1 1\n0.5 0 1 1\n");
  auto src = open_frame_source(dir / "c", "m/s");
  std::vector<Frame> chunk;
  try {
    src->read(1, 1, chunk);
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("f1.txt:2: vector at (0.500000, 0.000000) is off the grid of the first frame"),
              std::string::npos)
        << e.what();
  }
  dir.write("d/index.csv", "frame,file,time_s\n0,f0.txt,0.0\n");
  dir.write("d/f0.txt", "0 0 1\n");
  EXPECT_NE(error_of(dir / "d").find("f0.txt:1: expected 'x y u v [valid]', found 3 fields"), std::string::npos);
}

}  // namespace
}  // namespace stallscope::piv
