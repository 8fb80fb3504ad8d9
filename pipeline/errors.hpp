#pragma once
// Errors: the user's fault (InputError, exit 2) versus ours (std::logic_error, exit 1).
#include <stdexcept>
#include <string>

namespace stallscope {

// Bad input: a file, a line or key in it, and what was expected. main() prints
// what() as one line and exits with code 2.
class InputError : public std::runtime_error {
 public:
  // where: "file", "file:line:column" or "file: key"; what: the complaint.
  InputError(std::string where, const std::string& what)
      : std::runtime_error(where.empty() ? what : where + ": " + what), where_(std::move(where)) {}
  const std::string& where() const { return where_; }

 private:
  std::string where_;
};

// Bad usage of the command line (also exit 2).
class UsageError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace stallscope
