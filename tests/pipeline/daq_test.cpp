#include "stages/ingest/daq_file.hpp"

#include <gtest/gtest.h>

#include <cstring>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

using testing::ScratchDir;

std::string error_of(const std::filesystem::path& p) {
  try {
    read_daq_file(p);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

TEST(DaqFile, ReadsCsvWithCommentsAndSpaces) {
  ScratchDir dir;
  auto p = dir.write("daq.csv", "# tunnel PC export\ntime_s, enc, pitot\n0.0, 1.5, -2\n0.001, 1.25e0, 3\r\n");
  DaqRecord r = read_daq_file(p);
  EXPECT_EQ(r.channels, (std::vector<std::string>{"enc", "pitot"}));
  ASSERT_EQ(r.volts.rows(), 2);
  EXPECT_DOUBLE_EQ(r.volts(1, 0), 1.25);
  EXPECT_DOUBLE_EQ(r.volts(0, 1), -2.0);
  EXPECT_DOUBLE_EQ(r.time_s[1], 0.001);
}

TEST(DaqFile, ReadsHdf5) {
  ScratchDir dir;
  auto p = dir / "daq.h5";
  {
    h5::File f = h5::File::create(p);
    std::vector<double> t = {0.0, 0.5, 1.0};
    std::vector<double> v = {1, 2, 3, 4, 5, 6};  // row-major samples x channels
    h5::write_numbers(f.id(), "daq/time_s", t.data(), {3}, "s");
    h5::write_numbers(f.id(), "daq/volts", v.data(), {3, 2}, "V");
    h5::Id ds(H5Dopen2(f.id(), "daq/volts", H5P_DEFAULT));
    h5::write_text_list_attribute(ds.get(), "channels", {"enc", "pitot"});
  }
  DaqRecord r = read_daq_file(p);
  EXPECT_EQ(r.channels[1], "pitot");
  EXPECT_DOUBLE_EQ(r.volts(2, 0), 5.0);
  EXPECT_DOUBLE_EQ(r.volts(0, 1), 2.0);
}

TEST(DaqFile, RejectsMalformedRecordsWithTheRowOrChannel) {
  ScratchDir dir;
  EXPECT_NE(error_of(dir.write("a.csv", "")).find("DAQ file is empty"), std::string::npos);
  EXPECT_NE(error_of(dir.write("b.csv", "time_s,enc\n0,1\n0.1\n")).find("b.csv:3: expected 2 fields, found 1"),
            std::string::npos);
  EXPECT_NE(error_of(dir.write("c.csv", "time_s,enc\n0,1\n0.1,x\n")).find("c.csv:3: column 'enc': expected a number, found 'x'"),
            std::string::npos);
  EXPECT_NE(error_of(dir.write("d.csv", "time_s,enc\n0,1\n0,1\n")).find("duplicated time at sample 1"),
            std::string::npos);
  EXPECT_NE(error_of(dir.write("e.csv", "time_s,enc\n0,1\n0.2,1\n0.1,1\n")).find("non-monotonic time at sample 2"),
            std::string::npos);
  EXPECT_NE(error_of(dir.write("f.csv", "time_s,enc\n0,1\n0.1,nan\n")).find("channel 'enc' has a non-finite value at sample 1"),
            std::string::npos);
  EXPECT_NE(error_of(dir.write("g.csv", "time_s,enc,enc\n0,1,1\n")).find("channel 'enc' appears twice"),
            std::string::npos);
  EXPECT_NE(error_of(dir.write("h.csv", "time_s,enc\n")).find("CSV has a header but no samples"), std::string::npos);
}

TEST(DaqFile, RejectsHdf5WithWrongShapes) {
  ScratchDir dir;
  auto p = dir / "daq.h5";
  {
    h5::File f = h5::File::create(p);
    std::vector<double> t = {0.0, 0.5, 1.0};
    std::vector<double> v = {1, 2, 3, 4};
    h5::write_numbers(f.id(), "daq/time_s", t.data(), {3}, "s");
    h5::write_numbers(f.id(), "daq/volts", v.data(), {2, 2}, "V");
  }
  EXPECT_NE(error_of(p).find("/daq/volts has 2 rows but /daq/time_s has 3 samples"), std::string::npos);
  auto q = dir / "truncated.h5";
  {
    std::string bytes = testing::read_text(p);
    std::ofstream(q, std::ios::binary) << bytes.substr(0, bytes.size() / 3);
  }
  EXPECT_NE(error_of(q).find("truncated.h5"), std::string::npos);
}

// The DAQ reader decodes shuffled, deflated chunks itself (h5::RowReader, with
// libdeflate) and leaves every other layout to libhdf5; each must give the
// values h5py wrote, bit for bit (h5py through /usr/bin/python3 is the reference).
TEST(DaqFile, ReadsEveryChunkLayoutAndFilterAsH5pyWroteIt) {
  ScratchDir dir;
  const auto script = dir.write("layouts.py", R"(import h5py, numpy as np, sys, os
d = sys.argv[1]
rng = np.random.default_rng(7)
n, c = 5003, 5                      # the last chunk holds 3 of its 1000 rows
v = np.cumsum(rng.normal(size=(n, c)), axis=0) * 1e-2 + np.arange(c)
v[:, 2] = 0.25                     # a flat channel: chunks that compress far
v.astype('<f8').tofile(os.path.join(d, 'volts.bin'))
t = np.arange(n) / 2000.0
layouts = {
    'shuffle_gzip': dict(chunks=(1000, c), shuffle=True, compression='gzip', compression_opts=4),
    'gzip': dict(chunks=(1000, c), compression='gzip', compression_opts=9),
    'shuffle': dict(chunks=(1000, c), shuffle=True),
    'chunked': dict(chunks=(1000, c)),
    'column_chunks': dict(chunks=(1000, 2), shuffle=True, compression='gzip'),
    'fletcher': dict(chunks=(1000, c), shuffle=True, compression='gzip', fletcher32=True),
    'contiguous': dict(),
    'big_endian': dict(chunks=(1000, c), shuffle=True, compression='gzip', dtype='>f8'),
}
for name, kw in layouts.items():
    with h5py.File(os.path.join(d, name + '.h5'), 'w') as f:
        f['daq/time_s'] = t
        dtype = kw.pop('dtype', '<f8')
        ds = f.create_dataset('daq/volts', data=v.astype(dtype), **kw)
        ds.attrs['channels'] = ['c%d' % i for i in range(c)]
# One chunk's deflate stream damaged in the middle.
src = os.path.join(d, 'shuffle_gzip.h5')
with h5py.File(src, 'r') as f:
    info = f['daq/volts'].id.get_chunk_info(2)
raw = bytearray(open(src, 'rb').read())
at = info.byte_offset + info.size // 2
raw[at:at + 8] = b'\xff' * 8
open(os.path.join(d, 'damaged.h5'), 'wb').write(raw)
)");
  const testing::CommandResult made = testing::run_python(script, testing::shell_quote(dir.path().string()));
  ASSERT_EQ(made.exit_code, 0) << made.err;
  const std::string bytes = testing::read_text(dir / "volts.bin");
  const Eigen::Index n = 5003, c = 5;
  ASSERT_EQ(bytes.size(), static_cast<std::size_t>(n * c) * sizeof(double));
  Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> expected(n, c);
  std::memcpy(expected.data(), bytes.data(), bytes.size());
  for (const char* layout :
       {"shuffle_gzip", "gzip", "shuffle", "chunked", "column_chunks", "fletcher", "contiguous", "big_endian"}) {
    SCOPED_TRACE(layout);
    const DaqRecord r = read_daq_file(dir / (std::string(layout) + ".h5"));
    ASSERT_EQ(r.volts.rows(), n);
    ASSERT_EQ(r.volts.cols(), c);
    EXPECT_EQ(Eigen::MatrixXd(expected), r.volts);  // exact: the same doubles
    // Which layouts the reader's own decoder takes (the others go to libhdf5).
    const std::string name = layout;
    const bool own = name == "shuffle_gzip" || name == "gzip" || name == "shuffle" || name == "chunked";
    h5::File f = h5::File::open_read(dir / (name + ".h5"));
    const h5::RowReader reader(f.id(), "daq/volts", name);
    Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> block(2003, c);
    ASSERT_EQ(reader.read_decoded(3000, 2003, block.data()), own);
    if (own) {
      EXPECT_EQ(block, expected.bottomRows(2003));
    }
    EXPECT_FALSE(reader.read_decoded(10, 100, block.data()));  // not at a chunk's start
  }
  const std::string e = error_of(dir / "damaged.h5");
  EXPECT_NE(e.find("damaged.h5: /daq/volts cannot be read"), std::string::npos) << e;
}

}  // namespace
}  // namespace stallscope
