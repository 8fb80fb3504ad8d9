#include "stages/ingest/daq_file.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <fstream>
#include <set>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"

namespace stallscope {

namespace fs = std::filesystem;

int DaqRecord::channel_index(const std::string& name) const {
  for (std::size_t i = 0; i < channels.size(); ++i)
    if (channels[i] == name) return static_cast<int>(i);
  return -1;
}

std::string DaqRecord::where(Eigen::Index sample, const std::string& dataset) const {
  const auto i = static_cast<std::size_t>(sample);
  if (i < lines.size()) return source + ":" + std::to_string(lines[i]);
  return source + ": /daq/" + dataset;
}

static bool looks_like_hdf5(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  char sig[8] = {};
  in.read(sig, 8);
  return in.gcount() == 8 && std::string(sig, 8) == "\x89HDF\r\n\x1a\n";
}

DaqRecord read_daq_file(const fs::path& path) {
  std::error_code ec;
  if (!fs::exists(path, ec)) throw InputError(path.string(), "DAQ file not found");
  if (fs::file_size(path, ec) == 0) throw InputError(path.string(), "DAQ file is empty");
  // The extension, when it names a format, must agree with the content.
  std::string ext = path.extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return std::tolower(c); });
  const bool hdf5_name = ext == ".h5" || ext == ".hdf5" || ext == ".hdf";
  const bool hdf5_content = looks_like_hdf5(path);
  if (hdf5_name && !hdf5_content) throw InputError(path.string(), "not an HDF5 file (no HDF5 signature)");
  DaqRecord r = hdf5_content ? read_daq_hdf5(path) : read_daq_csv(path);
  check_daq_record(r);
  return r;
}

namespace {

std::vector<std::string_view> split_fields(std::string_view line) {
  std::vector<std::string_view> out;
  std::size_t start = 0;
  for (;;) {
    auto comma = line.find(',', start);
    std::string_view f = line.substr(start, comma == std::string_view::npos ? std::string_view::npos : comma - start);
    while (!f.empty() && (f.front() == ' ' || f.front() == '\t')) f.remove_prefix(1);
    while (!f.empty() && (f.back() == ' ' || f.back() == '\t' || f.back() == '\r')) f.remove_suffix(1);
    out.push_back(f);
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  return out;
}

}  // namespace

DaqRecord read_daq_csv(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "DAQ file cannot be read");
  DaqRecord r;
  r.source = path.string();
  std::string line;
  std::size_t line_no = 0;
  std::vector<std::string> header;
  std::vector<double> values;
  std::size_t rows = 0;
  while (std::getline(in, line)) {
    ++line_no;
    std::string_view sv(line);
    if (sv.empty() || sv == "\r" || sv.front() == '#') continue;
    auto fields = split_fields(sv);
    const std::string where = path.string() + ":" + std::to_string(line_no);
    if (header.empty()) {
      for (auto f : fields) header.emplace_back(f);
      if (header.front() != "time_s")
        throw InputError(where, "expected a CSV header row starting with 'time_s', found '" + header.front() + "'");
      if (header.size() < 2) throw InputError(where, "the header names no channels after 'time_s'");
      std::set<std::string> seen;
      for (std::size_t i = 1; i < header.size(); ++i) {
        if (header[i].empty()) throw InputError(where, "column " + std::to_string(i + 1) + " has no name");
        if (!seen.insert(header[i]).second) throw InputError(where, "channel '" + header[i] + "' appears twice");
      }
      continue;
    }
    if (fields.size() != header.size())
      throw InputError(where, "expected " + std::to_string(header.size()) + " fields, found " +
                                  std::to_string(fields.size()));
    for (std::size_t i = 0; i < fields.size(); ++i) {
      double v = 0;
      auto f = fields[i];
      auto [ptr, ec] = std::from_chars(f.data(), f.data() + f.size(), v);
      if (ec != std::errc() || ptr != f.data() + f.size()) {
        // from_chars does not take "nan"/"inf" spelled in other ways; treat them as numbers for the finite check.
        if (f == "nan" || f == "NaN" || f == "NAN") v = std::nan("");
        else if (f == "inf" || f == "Inf" || f == "+inf") v = INFINITY;
        else if (f == "-inf" || f == "-Inf") v = -INFINITY;
        else throw InputError(where, "column '" + header[i] + "': expected a number, found '" + std::string(f) + "'");
      }
      values.push_back(v);
    }
    r.lines.push_back(line_no);
    ++rows;
  }
  if (header.empty()) throw InputError(path.string(), "expected a CSV header row 'time_s,<channel>,...', found no lines");
  if (rows == 0) throw InputError(path.string(), "CSV has a header but no samples");
  const std::size_t cols = header.size();
  r.time_s.resize(static_cast<Eigen::Index>(rows));
  r.volts.resize(static_cast<Eigen::Index>(rows), static_cast<Eigen::Index>(cols - 1));
  for (std::size_t i = 0; i < rows; ++i) {
    r.time_s[static_cast<Eigen::Index>(i)] = values[i * cols];
    for (std::size_t c = 1; c < cols; ++c)
      r.volts(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(c - 1)) = values[i * cols + c];
  }
  r.channels.assign(header.begin() + 1, header.end());
  return r;
}

DaqRecord read_daq_hdf5(const fs::path& path) {
  h5::File f = h5::File::open_read(path);
  const std::string& fn = f.name();
  DaqRecord r;
  r.source = fn;
  std::vector<hsize_t> tdims;
  auto t = h5::read_numbers(f.id(), "daq/time_s", fn, &tdims);
  h5::DatasetInfo vi = h5::info(f.id(), "daq/volts", fn);
  const std::vector<hsize_t>& vdims = vi.dims;
  if (tdims.size() != 1) throw InputError(fn, "/daq/time_s must be 1-D (samples)");
  if (vdims.size() != 2) throw InputError(fn, "/daq/volts must be 2-D (samples x channels)");
  if (vi.type_class != H5T_FLOAT && vi.type_class != H5T_INTEGER) throw InputError(fn, "/daq/volts must be numeric");
  if (vdims[0] != tdims[0])
    throw InputError(fn, "/daq/volts has " + std::to_string(vdims[0]) + " rows but /daq/time_s has " +
                             std::to_string(tdims[0]) + " samples");
  if (tdims[0] == 0) throw InputError(fn, "/daq/time_s has no samples");
  (void)h5::checked_elements(f.id(), "daq/volts", fn, vi, sizeof(double));
  r.channels = h5::read_text_list_attribute(f.id(), "daq/volts", "channels");
  if (r.channels.size() != vdims[1])
    throw InputError(fn, "/daq/volts attribute 'channels' names " + std::to_string(r.channels.size()) +
                             " channels, the dataset has " + std::to_string(vdims[1]) + " columns");
  std::set<std::string> seen;
  for (const auto& c : r.channels) {
    if (c.empty()) throw InputError(fn, "/daq/volts attribute 'channels' has an empty channel name");
    if (!seen.insert(c).second)
      throw InputError(fn, "/daq/volts attribute 'channels': channel '" + c + "' appears twice");
  }
  r.time_s = Eigen::Map<Eigen::VectorXd>(t.data(), static_cast<Eigen::Index>(t.size()));
  // Read in blocks of rows and transpose each block while it is in cache: the
  // store keeps one contiguous column per channel.
  const auto n = static_cast<Eigen::Index>(vdims[0]), channels = static_cast<Eigen::Index>(vdims[1]);
  r.volts.resize(n, channels);
  const h5::RowReader reader(f.id(), "daq/volts", fn);
  const auto block_rows = static_cast<Eigen::Index>(reader.block_rows(4096));
  Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> block(std::min(block_rows, n), channels);
  for (Eigen::Index row0 = 0; row0 < n; row0 += block_rows) {
    const Eigen::Index rows = std::min(block_rows, n - row0);
    reader.read(static_cast<hsize_t>(row0), static_cast<hsize_t>(rows), block.data());
    r.volts.middleRows(row0, rows) = block.topRows(rows);
  }
  return r;
}

void check_daq_record(const DaqRecord& r) {
  const Eigen::Index n = r.time_s.size();
  for (Eigen::Index i = 0; i < n; ++i) {
    if (!std::isfinite(r.time_s[i]))
      throw InputError(r.where(i), "time_s of sample " + std::to_string(i) + " is not finite");
    if (i > 0 && r.time_s[i] <= r.time_s[i - 1])
      throw InputError(r.where(i), std::string(r.time_s[i] == r.time_s[i - 1] ? "duplicated" : "non-monotonic") +
                                     " time at sample " + std::to_string(i) + " (t = " +
                                     std::to_string(r.time_s[i]) + " s after " + std::to_string(r.time_s[i - 1]) +
                                     " s)");
  }
  for (Eigen::Index c = 0; c < r.volts.cols(); ++c)
    for (Eigen::Index i = 0; i < n; ++i)
      if (!std::isfinite(r.volts(i, c)))
        throw InputError(r.where(i, "volts"), "channel '" + r.channels[static_cast<std::size_t>(c)] +
                                                  "' has a non-finite value at sample " + std::to_string(i) +
                                                  " (t = " + std::to_string(r.time_s[i]) + " s)");
}

}  // namespace stallscope
