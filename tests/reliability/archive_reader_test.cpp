// Regression tests for reading damaged archives back (found while building
// the fuzz harnesses): each once crashed or failed as an internal error.
#include <gtest/gtest.h>

#include "pipeline/archive.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::ScratchDir;

// A string dataset of rank 2 was read into a buffer sized for its first
// dimension only: a heap overflow (ASan) for any archive holding one.
TEST(ArchiveReader, ReadsATextMatrixWithoutOverrunningItsBuffer) {
  ScratchDir dir;
  const fs::path path = dir / "texts.h5";
  {
    h5::File f = h5::File::create(path);
    h5::Id group = h5::open_or_create_group(f.id(), "run");
    hsize_t dims[2] = {3, 4};
    h5::Id space(H5Screate_simple(2, dims, nullptr));
    h5::Id type(H5Tcopy(H5T_C_S1));
    H5Tset_size(type.get(), 8);
    h5::Id ds(H5Dcreate2(group.get(), "labels", type.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT));
    std::vector<char> text(3 * 4 * 8, 'a');
    ASSERT_GE(H5Dwrite(ds.get(), type.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, text.data()), 0);
  }
  h5::File f = h5::File::open_read(path);
  const auto texts = h5::read_texts(f.id(), "run/labels", path.string());
  EXPECT_EQ(texts.size(), 12u);
  EXPECT_EQ(texts.front(), "aaaaaaaa");
}

// A table column whose units attribute is a number made read_archive throw
// std::bad_variant_access (exit 1, "internal error").
TEST(ArchiveReader, TakesANumericUnitsAttributeAsNoUnits) {
  ScratchDir dir;
  const fs::path path = dir / "units.h5";
  {
    h5::File f = h5::File::create(path);
    std::vector<double> cn = {0.1, 0.2};
    h5::write_numbers(f.id(), "cycles/t_start_s", cn.data(), {2}, "s");
    h5::write_attribute(f.id(), "cycles/t_start_s", "units", 3.0);
    h5::Id g = h5::open_or_create_group(f.id(), "cycles");
    h5::write_text_list_attribute(g.get(), "columns", {"t_start_s"});
  }
  RunStore store = read_archive(path);
  ASSERT_TRUE(store.contains("cycles"));
  EXPECT_EQ(store.get<Table>("cycles").columns.front().units, "");
}

// Provenance tables without their columns made `inspect` fail with
// std::logic_error (exit 1) instead of naming the damaged table.
TEST(ArchiveReader, NamesTheProvenanceTableThatLacksAColumn) {
  ScratchDir dir;
  const fs::path path = dir / "bare.h5";
  {
    h5::File f = h5::File::create(path);
    h5::open_or_create_group(f.id(), "provenance");
    h5::write_text(f.id(), "provenance/config_toml", "");
  }
  try {
    read_provenance(path);
    ADD_FAILURE() << "a provenance group without tables was accepted";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("/provenance/inputs needs a column 'path' of text"), std::string::npos)
        << e.what();
  }
}

}  // namespace
}  // namespace stallscope
