#include "pipeline/run_store.hpp"

#include <stdexcept>

namespace stallscope {

Entry& RunStore::put(const std::string& key, Value value, Attributes attributes) {
  if (key.empty() || key.front() == '/' || key.back() == '/')
    throw std::logic_error("run store key '" + key + "' must be a relative path like 'loads/cn'");
  Entry& e = entries_[key];
  e.value = std::move(value);
  e.attributes = std::move(attributes);
  return e;
}

const std::string& RunStore::checked(const std::string& key) const {
  if (!contains(key)) throw std::logic_error("run store has no '" + key + "'");
  return key;
}

const Entry& RunStore::entry(const std::string& key) const { return entries_.at(checked(key)); }

std::vector<std::string> RunStore::keys() const {
  std::vector<std::string> out;
  out.reserve(entries_.size());
  for (const auto& [k, _] : entries_) out.push_back(k);
  return out;
}

void RunStore::throw_wrong_type(const std::string& key, const Entry& e) {
  throw std::logic_error("run store '" + key + "' holds a " + std::string(value_kind(e.value)) +
                         ", not the type asked for");
}

}  // namespace stallscope
