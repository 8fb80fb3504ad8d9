// Regression tests for what tests/fuzz/run.sh found: each input kept in
// tests/reliability/fuzz_findings/ must now give the right answer.
#include <gtest/gtest.h>

#include <fstream>

#include "calib/lines/lines_file.hpp"
#include "calib/transducers/calibration_file.hpp"
#include "pipeline/archive.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/hdf5_heap_check.hpp"
#include "stages/ingest/daq_file.hpp"
#include "stages/piv/frame_source.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

const std::filesystem::path kFindings = testing::kSourceDir / "tests/reliability/fuzz_findings";

std::string input_error(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no InputError)";
}

// fuzz_calibration: an id holding backslashes was written back unescaped and read as another id.
TEST(FuzzFinding, CalibrationIdWithBackslashesIsWrittenBackAsTheSameId) {
  const auto file = kFindings / "calibration_id_escaping.toml";
  const calib::CalibrationFile f = calib::parse_calibration(testing::read_text(file), file);
  EXPECT_EQ(f.id, "press-press-201ressX\\\\\\\\\\\\r2026-11");
  const calib::CalibrationFile g = calib::parse_calibration(calib::format_calibration(f), "again.toml");
  EXPECT_EQ(g.id, f.id);
  EXPECT_EQ(g.channels.at("p01").coefficients, f.channels.at("p01").coefficients);
}

TEST(FuzzFinding, CalibrationQuotesAndOddChannelNamesSurviveTheRoundTrip) {
  calib::CalibrationFile f;
  f.id = "scanner \"B\" \\ \t tab, line\nbreak";
  f.date = "2026-11-20";
  f.kind = calib::CalibrationKind::kPressureTransducers;
  calib::ChannelCalibration c;
  c.coefficients = {-11.0, 248.5, 0.1 + 0.2};  // 0.30000000000000004 needs 17 digits
  c.temperature_coefficient_per_k = 1e-3;
  c.residual = 0.25;
  f.channels.emplace("p.01 \"left\"", c);
  f.channels.emplace("p02", c);
  const std::string text = calib::format_calibration(f);
  const calib::CalibrationFile g = calib::parse_calibration(text, "again.toml");
  EXPECT_EQ(g.id, f.id) << text;
  EXPECT_EQ(g.date, f.date);
  EXPECT_EQ(g.kind, f.kind);
  ASSERT_EQ(g.channels.size(), 2u) << text;
  const calib::ChannelCalibration& back = g.channels.at("p.01 \"left\"");
  EXPECT_EQ(back.coefficients, c.coefficients);
  EXPECT_EQ(back.temperature_coefficient_per_k, c.temperature_coefficient_per_k);
  EXPECT_EQ(back.residual, c.residual);
}

// fuzz_measured_response: a phase of 1e300 degrees made the unwrap loop step 360 at a time forever.
TEST(FuzzFinding, AbsurdPhaseInAMeasuredResponseIsBadInputNamingTheLine) {
  const auto file = kFindings / "measured_response_phase_hang.csv";
  const std::string e =
      input_error([&] { calib::parse_measured_response(testing::read_text(file), "line_probe.csv"); });
  EXPECT_NE(e.find("line_probe.csv:3"), std::string::npos) << e;
  EXPECT_NE(e.find("phase_deg"), std::string::npos) << e;
  for (const char* phase : {"1e300", "-1e7", "inf", "nan"}) {
    const std::string row = std::string("frequency_hz,gain,phase_deg\n0,1,0\n5,1,") + phase + "\n";
    EXPECT_NE(input_error([&] { calib::parse_measured_response(row, "p.csv"); }).find("p.csv:3"), std::string::npos)
        << phase;
  }
}

TEST(FuzzFinding, PhaseJumpsOfManyTurnsUnwrapInOneStep) {
  const calib::MeasuredResponse r = calib::parse_measured_response(
      "frequency_hz,gain,phase_deg\n0,1,0\n10,1,-350\n20,1,72010\n30,1,-190\n", "p.csv");
  ASSERT_EQ(r.phase_deg.size(), 4u);
  EXPECT_DOUBLE_EQ(r.phase_deg[1], 10.0);   // -350 + 360
  EXPECT_DOUBLE_EQ(r.phase_deg[2], 10.0);   // 72010 - 200 turns
  EXPECT_DOUBLE_EQ(r.phase_deg[3], 170.0);  // -190 + 360
}

// fuzz_archive_bytes: libhdf5 1.10 loops forever in H5HG_read on a global heap whose
// free-space entry has size 0. The check refuses the file before the library reads it.
TEST(FuzzFinding, DamagedGlobalHeapIsRefusedBeforeLibhdf5CanLoopOnIt) {
  const auto file = kFindings / "libhdf5_global_heap_hang_archive.h5";
  const std::string e = input_error([&] { h5::check_global_heaps(file, "archive.h5"); });
  EXPECT_NE(e.find("archive.h5: damaged HDF5 file: the global heap collection at byte 2048"), std::string::npos) << e;
  EXPECT_NE(input_error([&] { h5::File::open_read(file); }).find("global heap"), std::string::npos);
}

// fuzz_archive_bytes: the /provenance attribute "host" holds 1 byte where its
// variable-length string needs 16; libhdf5 1.10 read past its buffer in H5Aread.
TEST(FuzzFinding, AnAttributeShorterThanItsTypeIsUnreadableNotReadPastItsEnd) {
  const auto file = kFindings / "libhdf5_short_attribute_archive.h5";
  h5::File f = h5::File::open_read(file);
  EXPECT_FALSE(h5::read_attribute(f.id(), "provenance", "host").has_value());
  const auto version = h5::read_attribute(f.id(), "provenance", "tool_version");
  ASSERT_TRUE(version.has_value());
  EXPECT_TRUE(std::holds_alternative<std::string>(*version));
}

// fuzz_archive_bytes: a text column's heap id names an object its collection
// does not hold; libhdf5 1.10 indexed past its object table in H5HG_read.
TEST(FuzzFinding, AStringWhoseHeapObjectIsMissingIsRefusedBeforeLibhdf5ReadsIt) {
  const auto file = kFindings / "libhdf5_global_heap_index_segv_archive.h5";
  const std::string e = input_error([&] { (void)read_archive(file); });
  EXPECT_NE(e.find("libhdf5_global_heap_index_segv_archive.h5: damaged HDF5 file: string "), std::string::npos) << e;
  EXPECT_NE(e.find("global heap collection at byte"), std::string::npos) << e;
}

std::string patched(const std::string& bytes, std::size_t at, std::uint64_t value, std::size_t width) {
  std::string out = bytes;
  for (std::size_t i = 0; i < width; ++i) out[at + i] = static_cast<char>((value >> (8 * i)) & 0xff);
  return out;
}

// Where the heap id of the file's one string of this length is, found by its
// bytes alone (length, the first collection's address, an index); npos if none.
std::size_t heap_id_at(const std::string& bytes, std::uint64_t length) {
  const std::size_t gcol = bytes.find("GCOL");
  if (gcol == std::string::npos) return gcol;
  std::size_t at = std::string::npos;
  for (std::uint64_t index = 1; index < 64 && at == std::string::npos; ++index)
    at = bytes.find(patched(patched(patched(std::string(16, '\0'), 0, length, 4), 4, gcol, 8), 12, index, 4));
  return at;
}

TEST(GlobalHeapCheck, PassesSoundFilesAndRefusesEveryEndlessOrOutOfBoundsWalk) {
  testing::ScratchDir dir;
  // A sound file with variable-length strings: an attribute and a dataset.
  const auto sound = dir / "sound.h5";
  const auto script = dir.write("sound.py",
                                "import h5py, sys\n"
                                "with h5py.File(sys.argv[1], 'w') as f:\n"
                                "    d = f.create_dataset('names', data=['alpha_enc', 'q_pitot', 'p01'],\n"
                                "                         dtype=h5py.string_dtype())\n"
                                "    d.attrs['units'] = 'V'\n");
  const testing::CommandResult made = testing::run_python(script, testing::shell_quote(sound.string()));
  ASSERT_EQ(made.exit_code, 0) << made.err;
  EXPECT_NO_THROW(h5::check_global_heaps(sound, "sound.h5"));
  for (const char* sample : {"sample_data/kestrel_ridge/run1/daq.h5", "sample_data/kestrel_ridge/run1/piv.h5"}) {
    if (std::filesystem::exists(testing::kSourceDir / sample)) {
      EXPECT_NO_THROW(h5::check_global_heaps(testing::kSourceDir / sample, sample)) << sample;
    }
  }

  // Its first collection: header (16 bytes), then objects of 16-byte headers.
  const std::string bytes = testing::read_text(sound);
  const std::size_t gcol = bytes.find("GCOL");
  ASSERT_NE(gcol, std::string::npos);
  const std::size_t first_object = gcol + 16;
  ASSERT_EQ(bytes[first_object], 1);  // heap object 1
  auto refused = [&](const std::string& damaged) {
    const auto p = dir / "damaged.h5";
    std::ofstream(p, std::ios::binary) << damaged;
    return input_error([&] { h5::check_global_heaps(p, "damaged.h5"); });
  };
  // Object 1 turned into a free-space entry of size 0: libhdf5 would never move on.
  EXPECT_NE(refused(patched(patched(bytes, first_object, 0, 2), first_object + 8, 0, 8)).find("has size 0"),
            std::string::npos);
  // Object 1 declaring 2^63 bytes: libhdf5 would step outside the collection.
  EXPECT_NE(refused(patched(bytes, first_object + 8, std::uint64_t{1} << 63, 8)).find("past the collection's end"),
            std::string::npos);
}

// fuzz_archive_bytes: a string *attribute*'s heap id names an object its
// collection does not hold; libhdf5 1.10 indexed past its object table in
// H5HG_read under H5Aread (reading /provenance in read_provenance). The heap
// ids are found in the object header by attribute_data_offset and checked.
TEST(GlobalHeapCheck, AStringAttributeWhoseHeapObjectIsMissingIsRefusedBeforeLibhdf5ReadsIt) {
  testing::ScratchDir dir;
  // Both object header versions: libver earliest writes version 1 headers and
  // attribute messages, latest version 2 headers and version 3 messages.
  const auto script = dir.write("attrs.py",
                                "import h5py, sys\n"
                                "for path, libver in ((sys.argv[1], 'earliest'), (sys.argv[2], 'latest')):\n"
                                "    with h5py.File(path, 'w', libver=libver) as f:\n"
                                "        g = f.create_group('provenance')\n"
                                "        g.attrs['tool_version'] = '0.9.1'\n"
                                "        g.attrs['host'] = 'tunnel-pc'\n"
                                "        g.attrs['stages'] = ['daq', 'cp', 'loads']\n"
                                "        d = f.create_group('dense')\n"
                                "        for i in range(20): d.attrs['a%02d' % i] = 'value %d' % i\n");
  const auto v1 = dir / "v1.h5", v2 = dir / "v2.h5";
  const testing::CommandResult made =
      testing::run_python(script, testing::shell_quote(v1.string()) + " " + testing::shell_quote(v2.string()));
  ASSERT_EQ(made.exit_code, 0) << made.err;
  for (const auto& sound : {v1, v2}) {
    SCOPED_TRACE(sound.filename().string());
    const std::string bytes = testing::read_text(sound);
    const std::size_t id_at = heap_id_at(bytes, 9);  // "tunnel-pc"
    ASSERT_NE(id_at, std::string::npos);
    {
      h5::File f = h5::File::open_read(sound);
      H5O_info_t oi;
      ASSERT_GE(H5Oget_info_by_name(f.id(), "provenance", &oi, H5P_DEFAULT), 0);
      EXPECT_EQ(h5::attribute_data_offset(sound, 0, oi.addr, "host", 8, 8), std::optional<std::uint64_t>(id_at));
      EXPECT_EQ(h5::read_attribute(f.id(), "provenance", "host"), std::optional<AttributeValue>(std::string("tunnel-pc")));
      EXPECT_EQ(h5::read_text_list_attribute(f.id(), "provenance", "stages"),
                (std::vector<std::string>{"daq", "cp", "loads"}));
      EXPECT_FALSE(h5::attribute_data_offset(sound, 0, oi.addr, "hos", 8, 8).has_value());
      // Twenty attributes: dense storage in the version 2 file, out of the walk's reach but still read.
      EXPECT_EQ(h5::read_attribute(f.id(), "dense", "a17"), std::optional<AttributeValue>(std::string("value 17")));
    }
    // A version 2 header carries a checksum: libhdf5 refuses such damage itself
    // (and leaks the header it was loading, which LeakSanitizer would report).
    if (sound == v2) continue;
    const auto damaged = dir / "damaged.h5";
    std::ofstream(damaged, std::ios::binary) << patched(bytes, id_at + 12, 77, 4);
    h5::File f = h5::File::open_read(damaged);
    const std::string e = input_error([&] { (void)h5::read_attribute(f.id(), "provenance", "host"); });
    EXPECT_NE(e.find("damaged.h5: damaged HDF5 file: string 0 of /provenance attribute 'host' refers to object 77"),
              std::string::npos)
        << e;
    const auto version = h5::read_attribute(f.id(), "provenance", "tool_version");
    ASSERT_TRUE(version.has_value());
    EXPECT_EQ(std::get<std::string>(*version), "0.9.1");
  }
}

// The same damage in a string dataset of compact layout, whose heap ids sit in its layout message.
TEST(GlobalHeapCheck, ACompactStringDatasetWhoseHeapObjectIsMissingIsRefusedBeforeLibhdf5ReadsIt) {
  testing::ScratchDir dir;
  const auto sound = dir / "compact.h5";
  {
    h5::File f = h5::File::create(sound);
    const std::vector<const char*> names = {"alpha_enc", "q_pitot", "p01"};
    const hsize_t n = names.size();
    h5::Id space(H5Screate_simple(1, &n, nullptr));
    h5::Id dcpl(H5Pcreate(H5P_DATASET_CREATE));
    ASSERT_GE(H5Pset_layout(dcpl.get(), H5D_COMPACT), 0);
    h5::Id type(H5Tcopy(H5T_C_S1));
    H5Tset_size(type.get(), H5T_VARIABLE);
    H5Tset_cset(type.get(), H5T_CSET_UTF8);
    h5::Id ds(H5Dcreate2(f.id(), "names", type.get(), space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT));
    ASSERT_GE(H5Dwrite(ds.get(), type.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, names.data()), 0);
  }
  {
    h5::File f = h5::File::open_read(sound);
    EXPECT_EQ(h5::read_texts(f.id(), "names", "compact.h5"), (std::vector<std::string>{"alpha_enc", "q_pitot", "p01"}));
  }
  const std::string bytes = testing::read_text(sound);
  const std::size_t id_at = heap_id_at(bytes, 7);  // "q_pitot"
  ASSERT_NE(id_at, std::string::npos);
  const auto damaged = dir / "damaged.h5";
  std::ofstream(damaged, std::ios::binary) << patched(bytes, id_at + 12, 77, 4);
  h5::File f = h5::File::open_read(damaged);
  const std::string e = input_error([&] { (void)h5::read_texts(f.id(), "names", "damaged.h5"); });
  EXPECT_NE(e.find("damaged.h5: damaged HDF5 file: string 1 of /names refers to object 77"), std::string::npos) << e;
}

// fuzz_archive_bytes and fuzz_daq_hdf5: a string attribute whose heap id's length
// disagrees with its heap object. libhdf5 1.10 spent ~16 s converting the first
// and asked malloc for 895 MB for the second; both are refused before H5Aread.
TEST(FuzzFinding, AStringWhoseLengthDisagreesWithItsHeapObjectIsRefused) {
  const std::string slow = input_error([] { (void)read_provenance(kFindings / "libhdf5_vlen_conversion_slow_archive.h5"); });
  EXPECT_NE(slow.find("damaged HDF5 file: string 0 of /provenance/calibrations attribute 'columns' refers to object 17"),
            std::string::npos)
      << slow;
  EXPECT_NE(slow.find("bytes for a string of"), std::string::npos) << slow;
  const std::string huge =
      input_error([] { (void)read_daq_file(kFindings / "libhdf5_vlen_attribute_huge_allocation_daq.h5"); });
  EXPECT_NE(huge.find("libhdf5_vlen_attribute_huge_allocation_daq.h5: damaged HDF5 file: string"), std::string::npos)
      << huge;
}

// fuzz_daq_hdf5: the attribute message of /daq/volts@channels declares a
// dataspace of 65,048 bytes in a message of 104; libhdf5 1.10 copied past its
// buffer decoding it (H5O__msg_iterate_real, under H5Aexists_by_name).
TEST(FuzzFinding, AnAttributeMessageLongerThanItselfIsRefusedBeforeLibhdf5DecodesIt) {
  const std::string e =
      input_error([] { (void)read_daq_file(kFindings / "libhdf5_attribute_message_overflow_daq.h5"); });
  EXPECT_NE(e.find("libhdf5_attribute_message_overflow_daq.h5: damaged HDF5 file: an attribute message in the header "
                   "of /daq/volts declares a name of 9, a type of 20 and a dataspace of 65048 bytes, more than its 104"),
            std::string::npos)
      << e;
}

// fuzz_piv_hdf5: a damaged datatype gives /piv/y_m floats of hundreds of
// megabytes each; libhdf5 1.10 asked malloc for 805 MB to convert the few values.
TEST(FuzzFinding, NumbersTooWideToBeRealAreRefusedBeforeLibhdf5AllocatesForThem) {
  const std::string e =
      input_error([] { (void)piv::open_frame_source(kFindings / "libhdf5_huge_number_type_piv.h5", "m/s"); });
  EXPECT_NE(e.find("libhdf5_huge_number_type_piv.h5: /piv/y_m declares numbers of "), std::string::npos) << e;
  EXPECT_NE(e.find("a damaged datatype"), std::string::npos) << e;
}

// And chunks of more than 128 MiB, which libhdf5 allocates whole to read any part.
TEST(FuzzFinding, ChunksTooLargeToBeRealAreRefusedBeforeLibhdf5AllocatesThem) {
  testing::ScratchDir dir;
  const auto path = dir / "huge_chunks.h5";
  {
    h5::File f = h5::File::create(path);
    const hsize_t dims[1] = {16}, max_dims[1] = {H5S_UNLIMITED}, chunk[1] = {hsize_t{1} << 25};  // 256 MiB of doubles
    h5::Id space(H5Screate_simple(1, dims, max_dims));
    h5::Id dcpl(H5Pcreate(H5P_DATASET_CREATE));
    ASSERT_GE(H5Pset_chunk(dcpl.get(), 1, chunk), 0);
    h5::Id ds(H5Dcreate2(f.id(), "x_m", H5T_IEEE_F64LE, space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT));
    ASSERT_TRUE(ds);
  }
  h5::File f = h5::File::open_read(path);
  const std::string e = input_error([&] { (void)h5::read_numbers(f.id(), "x_m", "huge_chunks.h5"); });
  EXPECT_NE(e.find("huge_chunks.h5: /x_m is stored in chunks of more than 128 MiB"), std::string::npos) << e;
}

// fuzz_archive_bytes: a group's local heap declares a data segment larger than
// the file; libhdf5 1.10 asked malloc for it (over 512 MiB) under H5Lexists.
TEST(FuzzFinding, ALocalHeapLargerThanTheFileIsRefusedBeforeLibhdf5AllocatesIt) {
  const auto file = kFindings / "libhdf5_local_heap_allocation_archive.h5";
  const std::string e = input_error([&] { (void)read_provenance(file); });
  EXPECT_NE(e.find("libhdf5_local_heap_allocation_archive.h5: damaged HDF5 file: the local heap at byte "),
            std::string::npos)
      << e;
  EXPECT_NE(e.find("more than the file's"), std::string::npos) << e;
  // Sound files with groups pass: the demo data and an archive-like file.
  for (const char* sample : {"sample_data/kestrel_ridge/run1/daq.h5", "sample_data/kestrel_ridge/run1/piv.h5",
                             "sample_data/kestrel_ridge/run1/truth.h5"})
    EXPECT_NO_THROW(h5::check_global_heaps(testing::kSourceDir / sample, sample)) << sample;
}

}  // namespace
}  // namespace stallscope
