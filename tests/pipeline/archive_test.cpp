#include "pipeline/archive.hpp"

#include <gtest/gtest.h>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::ScratchDir;

RunStore sample_store() {
  RunStore s;
  s.put("run/chord_m", Scalar{0.3, "m"});
  s.put("run/name", Text{"r042"});
  Eigen::VectorXd t = Eigen::VectorXd::LinSpaced(10000, 0.0, 9.999);  // large enough to be chunked
  s.put("loads/time_s", Series{t, "s"});
  s.put("loads/cn", Series{(2 * t).array().sin().matrix(), "1"}, {{"moment_ref_x_over_c", 0.25}});
  Eigen::MatrixXd cp(3, 2);
  cp << -1.0, 0.5, -2.0, 0.25, -3.0, 0.125;
  s.put("pressure/cp", Matrix{cp, "1", {"p01", "p02"}});
  Table events;
  events.add({"cycle", "1", std::vector<std::int64_t>{1, 2}});
  events.add({"event", "", std::vector<std::string>{"stall_onset", "stall_onset"}});
  events.add({"t_s", "s", std::vector<double>{1.25, std::nan("")}});
  s.put("events/per_cycle", events, {{"csv", std::string("events_per_cycle.csv")}});
  s.put("daq/volts", Matrix{Eigen::MatrixXd::Ones(2, 2), "V", {"a", "b"}});  // working data: not archived
  return s;
}

Provenance sample_provenance(const fs::path& raw) {
  Provenance p = Provenance::start("stallscope reduce run.toml");
  p.config_toml = "[run]\nname = \"r042\"\n";
  p.add_input(raw, "DAQ file");
  p.stages.push_back({"loads", 0.5, "closure = \"linear\"\n"});
  return p;
}

TEST(Archive, RoundTripsEveryValueKindAndProvenance) {
  ScratchDir dir;
  auto raw = dir.write("daq.csv", "time_s,a\n0,1\n");
  ArchiveTarget target{dir / "out", "r042", false};
  fs::path archive = write_archive(sample_store(), sample_provenance(raw), target);
  EXPECT_EQ(archive, dir / "out" / "r042.h5");
  EXPECT_FALSE(fs::exists(dir / "out" / "r042.h5.partial"));

  RunStore back = read_archive(archive);
  EXPECT_DOUBLE_EQ(back.get<Scalar>("run/chord_m").value, 0.3);
  EXPECT_EQ(back.get<Text>("run/name").value, "r042");
  EXPECT_EQ(back.get<Series>("loads/cn").values.size(), 10000);
  EXPECT_DOUBLE_EQ(back.get<Series>("loads/cn").values[5000], std::sin(2 * back.get<Series>("loads/time_s").values[5000]));
  EXPECT_EQ(std::get<double>(back.entry("loads/cn").attributes.at("moment_ref_x_over_c")), 0.25);
  const Matrix& cp = back.get<Matrix>("pressure/cp");
  EXPECT_EQ(cp.values(2, 0), -3.0);
  EXPECT_EQ(cp.values(0, 1), 0.5);
  EXPECT_EQ(cp.columns, (std::vector<std::string>{"p01", "p02"}));
  const Table& ev = back.get<Table>("events/per_cycle");
  EXPECT_EQ(ev.integers("cycle")[1], 2);
  EXPECT_EQ(ev.texts("event")[0], "stall_onset");
  EXPECT_TRUE(std::isnan(ev.numbers("t_s")[1]));
  EXPECT_FALSE(back.contains("daq/volts"));

  Provenance p = read_provenance(archive);
  ASSERT_EQ(p.inputs.size(), 1u);
  EXPECT_EQ(p.inputs[0].role, "DAQ file");
  EXPECT_EQ(p.inputs[0].bytes, 13u);
  EXPECT_EQ(p.stages[0].name, "loads");
  EXPECT_EQ(p.config_toml, "[run]\nname = \"r042\"\n");
  EXPECT_FALSE(p.git_commit.empty());
}

TEST(Archive, ReadsOnlyThePathsAskedFor) {
  ScratchDir dir;
  auto raw = dir.write("daq.csv", "time_s,a\n0,1\n");
  const fs::path archive = write_archive(sample_store(), sample_provenance(raw), {dir / "out", "r042", false});
  const RunStore some = read_archive(archive, {"loads/cn", "events/per_cycle"});
  EXPECT_TRUE(some.contains("loads/cn"));
  EXPECT_EQ(std::get<double>(some.entry("loads/cn").attributes.at("moment_ref_x_over_c")), 0.25);
  EXPECT_TRUE(some.contains("events/per_cycle"));
  EXPECT_EQ(some.get<Table>("events/per_cycle").rows(), 2u);
  // Neither a sibling, nor another group, nor the attributes of the group on the way.
  EXPECT_FALSE(some.contains("loads/time_s"));
  EXPECT_FALSE(some.contains("pressure/cp"));
  EXPECT_FALSE(some.contains("run/chord_m"));
  const RunStore run = read_archive(archive, {"run"});
  EXPECT_DOUBLE_EQ(run.get<Scalar>("run/chord_m").value, 0.3);
  EXPECT_EQ(run.keys().size(), 2u);
  EXPECT_EQ(read_archive(archive, {}).keys(), read_archive(archive).keys());
}

TEST(Archive, WritesTheCsvExportsBesideTheArchive) {
  ScratchDir dir;
  auto raw = dir.write("daq.csv", "time_s,a\n0,1\n");
  write_archive(sample_store(), sample_provenance(raw), {dir.path(), "r042", false});
  EXPECT_EQ(testing::read_text(dir / "events_per_cycle.csv"),
            "cycle,event,t_s\n1,stall_onset,1.25\n2,stall_onset,\n");
}

TEST(Archive, NeverOverwritesWithoutForce) {
  ScratchDir dir;
  auto raw = dir.write("daq.csv", "time_s,a\n0,1\n");
  ArchiveTarget target{dir.path(), "r042", false};
  write_archive(sample_store(), sample_provenance(raw), target);
  const auto before = fs::last_write_time(target.archive_path());
  try {
    write_archive(sample_store(), sample_provenance(raw), target);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("archive already exists (use --force"), std::string::npos);
  }
  EXPECT_EQ(fs::last_write_time(target.archive_path()), before);
  target.force = true;
  EXPECT_NO_THROW(write_archive(sample_store(), sample_provenance(raw), target));
}

// Independent check: Debian's h5py reads every dataset back, finds a units
// attribute on each numeric one, and sees the same numbers.
TEST(Archive, IsReadableByH5pyWithUnitsOnEveryNumericDataset) {
  ScratchDir dir;
  auto raw = dir.write("daq.csv", "time_s,a\n0,1\n");
  fs::path archive = write_archive(sample_store(), sample_provenance(raw), {dir.path(), "r042", false});
  auto r = testing::run_python(testing::kSourceDir / "tests/pipeline/read_archive.py", archive.string());
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find(R"("path": "/pressure/cp", "shape": [3, 2], "kind": "f", "units": "1", "sum": -5.125)"),
            std::string::npos) << r.out;
  EXPECT_NE(r.out.find(R"("path": "/loads/time_s", "shape": [10000], "kind": "f", "units": "s")"), std::string::npos);
  EXPECT_NE(r.out.find(R"("path": "/events/per_cycle/event", "shape": [2], "kind": "O", "units": null, "first": "stall_onset")"),
            std::string::npos) << r.out;
  EXPECT_NE(r.out.find(R"("path": "/provenance/inputs/bytes", "shape": [1], "kind": "i", "units": "B", "sum": 13.0)"),
            std::string::npos) << r.out;
  EXPECT_NE(r.out.find(R"({"attr": "/run/chord_m", "value": 0.3})"), std::string::npos) << r.out;
}

// Other writers (C and MATLAB DAQ software) store ASCII strings; libhdf5 will
// not convert them to UTF-8, so they are read in their own character set.
TEST(H5Strings, AsciiVariableLengthStringsOfOtherWritersAreRead) {
  testing::ScratchDir dir;
  const auto path = dir / "ascii.h5";
  {
    h5::File f = h5::File::create(path);
    h5::Id type(H5Tcopy(H5T_C_S1));
    H5Tset_size(type.get(), H5T_VARIABLE);
    H5Tset_cset(type.get(), H5T_CSET_ASCII);
    const std::vector<const char*> names = {"alpha_enc", "q_pitot"};
    const hsize_t n = names.size();
    h5::Id list(H5Screate_simple(1, &n, nullptr)), scalar(H5Screate(H5S_SCALAR));
    h5::Id ds(H5Dcreate2(f.id(), "names", type.get(), list.get(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT));
    ASSERT_GE(H5Dwrite(ds.get(), type.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, names.data()), 0);
    h5::Id channels(H5Acreate2(ds.get(), "channels", type.get(), list.get(), H5P_DEFAULT, H5P_DEFAULT));
    ASSERT_GE(H5Awrite(channels.get(), type.get(), names.data()), 0);
    const char* volts = "V";
    h5::Id units(H5Acreate2(ds.get(), "units", type.get(), scalar.get(), H5P_DEFAULT, H5P_DEFAULT));
    ASSERT_GE(H5Awrite(units.get(), type.get(), &volts), 0);
  }
  h5::File f = h5::File::open_read(path);
  EXPECT_EQ(h5::read_texts(f.id(), "names", "ascii.h5"), (std::vector<std::string>{"alpha_enc", "q_pitot"}));
  EXPECT_EQ(h5::read_text_list_attribute(f.id(), "names", "channels"),
            (std::vector<std::string>{"alpha_enc", "q_pitot"}));
  EXPECT_EQ(h5::read_attribute(f.id(), "names", "units"), std::optional<AttributeValue>(std::string("V")));
}

}  // namespace
}  // namespace stallscope
