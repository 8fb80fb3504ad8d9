#pragma once
// Reading a DAQ record in the project's two formats (README, "Input formats"):
// HDF5 with /daq/time_s and /daq/volts (+ attribute `channels`), or CSV with a
// header row `time_s,<name>,...`. The format is told by content, not by name.
#include <filesystem>
#include <string>
#include <vector>

#include <Eigen/Core>

namespace stallscope {

struct DaqRecord {
  Eigen::VectorXd time_s;
  Eigen::MatrixXd volts;  // samples x channels
  std::vector<std::string> channels;
  std::string source;  // file name, for messages
  std::vector<std::size_t> lines;  // CSV: the file line of each sample; empty for HDF5
  int channel_index(const std::string& name) const;  // -1 if absent
  // Where sample i is, for messages: "file:line" (CSV) or "file: /daq/<dataset>" (HDF5).
  std::string where(Eigen::Index sample, const std::string& dataset = "time_s") const;
};

DaqRecord read_daq_file(const std::filesystem::path& path);
DaqRecord read_daq_csv(const std::filesystem::path& path);
DaqRecord read_daq_hdf5(const std::filesystem::path& path);

// Checks that time is finite and strictly increasing, and that every volt
// is finite; throws InputError naming the file and the line (CSV) or the
// dataset (HDF5), the sample and the channel.
void check_daq_record(const DaqRecord& record);

}  // namespace stallscope
