#include "pipeline/scheduler.hpp"

#include <algorithm>
#include <map>
#include <set>

#include "pipeline/errors.hpp"

namespace stallscope {

std::vector<Stage*> schedule(const std::vector<std::unique_ptr<Stage>>& stages, const std::string& config_name,
                             const std::vector<std::string>& available) {
  const std::size_t n = stages.size();
  std::map<std::string, std::size_t> producer;
  for (std::size_t i = 0; i < n; ++i) {
    for (const auto& key : stages[i]->outputs()) {
      auto [it, fresh] = producer.emplace(key, i);
      if (!fresh)
        throw InputError(config_name, "stages '" + std::string(stages[it->second]->name()) + "' and '" +
                                          std::string(stages[i]->name()) + "' both produce '" + key +
                                          "'; enable only one of them");
    }
  }
  const std::set<std::string> before(available.begin(), available.end());
  std::vector<std::set<std::size_t>> needs(n);
  for (std::size_t i = 0; i < n; ++i) {
    for (const auto& key : stages[i]->inputs()) {
      auto it = producer.find(key);
      if (it != producer.end()) needs[i].insert(it->second);
      else if (!before.count(key))
        throw InputError(config_name, "stage '" + std::string(stages[i]->name()) + "' needs '" + key +
                                          "', which no enabled stage produces");
    }
    for (const auto& key : stages[i]->optional_inputs()) {
      auto it = producer.find(key);
      if (it != producer.end() && it->second != i) needs[i].insert(it->second);
    }
    needs[i].erase(i);
  }
  // Kahn's algorithm; the lowest index (registry order) goes first among the ready.
  std::vector<Stage*> order;
  std::vector<bool> done(n, false);
  while (order.size() < n) {
    std::size_t next = n;
    for (std::size_t i = 0; i < n && next == n; ++i)
      if (!done[i] && std::all_of(needs[i].begin(), needs[i].end(), [&](std::size_t j) { return done[j]; }))
        next = i;
    if (next == n) {
      // Walk the dependencies of a remaining stage until one repeats.
      std::size_t start = 0;
      while (done[start]) ++start;
      std::vector<std::size_t> path{start};
      for (;;) {
        std::size_t cur = path.back(), dep = n;
        for (std::size_t j : needs[cur])
          if (!done[j]) { dep = j; break; }
        auto seen = std::find(path.begin(), path.end(), dep);
        if (seen != path.end()) {
          std::string cycle;
          for (auto it = seen; it != path.end(); ++it) cycle += std::string(stages[*it]->name()) + " needs ";
          cycle += std::string(stages[dep]->name());
          throw InputError(config_name, "stages depend on each other in a cycle: " + cycle);
        }
        path.push_back(dep);
      }
    }
    done[next] = true;
    order.push_back(stages[next].get());
  }
  return order;
}

}  // namespace stallscope
