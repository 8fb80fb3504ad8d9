#pragma once
// One run's data, keyed by name. Keys are archive paths ("loads/cn"); the
// archive writes every entry whose top-level group belongs to the archive
// layout, so the store is the archive before it is written.
#include <map>
#include <string>
#include <vector>

#include "pipeline/values.hpp"

namespace stallscope {

struct Entry {
  Value value;
  Attributes attributes;  // extra attributes beside "units"
};

class RunStore {
 public:
  bool contains(const std::string& key) const { return entries_.count(key) != 0; }

  // Stores (or replaces) a value under key.
  Entry& put(const std::string& key, Value value, Attributes attributes = {});

  // Typed access; a missing key or a value of another type is a logic error
  // (the scheduler guarantees declared inputs exist).
  template <typename T>
  const T& get(const std::string& key) const {
    const Entry& e = entry(key);
    if (const T* v = std::get_if<T>(&e.value)) return *v;
    throw_wrong_type(key, e);
  }
  template <typename T>
  T& get_mutable(const std::string& key) {
    Entry& e = entries_.at(checked(key));
    if (T* v = std::get_if<T>(&e.value)) return *v;
    throw_wrong_type(key, e);
  }
  const Entry& entry(const std::string& key) const;
  Attributes& attributes(const std::string& key) { return entries_.at(checked(key)).attributes; }

  std::vector<std::string> keys() const;  // sorted, so archives are reproducible
  const std::map<std::string, Entry>& entries() const { return entries_; }

 private:
  const std::string& checked(const std::string& key) const;
  [[noreturn]] static void throw_wrong_type(const std::string& key, const Entry& e);
  std::map<std::string, Entry> entries_;
};

}  // namespace stallscope
