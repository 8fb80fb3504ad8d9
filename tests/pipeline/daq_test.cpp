#include "stages/ingest/daq_file.hpp"

#include <gtest/gtest.h>

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

}  // namespace
}  // namespace stallscope
