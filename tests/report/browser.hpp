#pragma once
// Headless Chromium (Debian's chromium package) for the report tests: a fresh
// profile per call, no network services, the page's DOM printed after load.
#include <cmath>
#include <filesystem>
#include <regex>
#include <string>

#include "tests/support/test_support.hpp"

namespace stallscope::testing {

inline const char* kChromium = "/usr/bin/chromium";

// Loads file://page and returns the DOM after the load event (images included).
inline CommandResult chromium_dump_dom(const std::filesystem::path& page) {
  ScratchDir profile;
  return run_command(std::string(kChromium) +
                     " --headless --no-sandbox --disable-gpu --disable-quic --no-first-run"
                     " --disable-background-networking --disable-component-update --disable-sync"
                     " --disable-extensions --user-data-dir=" + shell_quote(profile.path().string()) +
                     " --virtual-time-budget=5000 --dump-dom " +
                     shell_quote("file://" + std::filesystem::absolute(page).string()));
}

inline CommandResult chromium_screenshot(const std::filesystem::path& page, const std::filesystem::path& png,
                                         int width = 1100, int height = 3000) {
  ScratchDir profile;
  return run_command(std::string(kChromium) +
                     " --headless --no-sandbox --disable-gpu --disable-quic --no-first-run"
                     " --disable-background-networking --disable-component-update --disable-sync"
                     " --disable-extensions --hide-scrollbars --user-data-dir=" + shell_quote(profile.path().string()) +
                     " --window-size=" + std::to_string(width) + "," + std::to_string(height) +
                     " --screenshot=" + shell_quote(std::filesystem::absolute(png).string()) + " " +
                     shell_quote("file://" + std::filesystem::absolute(page).string()));
}

// A copy of the report page beside it with a probe that, after load, writes
// how many images there are and which did not decode.
inline std::filesystem::path with_image_probe(const std::filesystem::path& index) {
  std::string html = read_text(index);
  const std::string probe =
      "<script>window.addEventListener('load', function () {"
      " var all = Array.prototype.slice.call(document.images);"
      " var bad = all.filter(function (i) { return !(i.complete && i.naturalWidth > 0 && i.naturalHeight > 0); });"
      " var p = document.createElement('pre'); p.id = 'image-probe';"
      " p.textContent = 'images=' + all.length + ' broken=' + bad.length + ' ' +"
      "   bad.map(function (i) { return i.getAttribute('src'); }).join(',');"
      " document.body.appendChild(p); });</script>";
  const auto at = html.rfind("</body>");
  html.insert(at == std::string::npos ? html.size() : at, probe);
  const auto probe_page = index.parent_path() / "probe.html";
  std::ofstream(probe_page, std::ios::binary) << html;
  return probe_page;
}

// The text of the element carrying data-key="key", tags stripped, as a number
// ("−" read as minus, "×10<sup>n</sup>" as an exponent). NaN if absent.
inline double number_at_key(const std::string& dom, const std::string& key) {
  const std::string marker = "data-key=\"" + key + "\">";
  const auto at = dom.find(marker);
  if (at == std::string::npos) return std::nan("");
  const auto start = at + marker.size();
  // Up to the closing tag of a <td> or <span>.
  auto stop = dom.find("</td>", start);
  stop = std::min(stop, dom.find("</span>", start));
  std::string text = dom.substr(start, stop - start);
  text = std::regex_replace(text, std::regex("\u00d710<sup>"), "e");
  text = std::regex_replace(text, std::regex("<[^>]*>"), "");
  text = std::regex_replace(text, std::regex("\u2212"), "-");
  try {
    return std::stod(text);
  } catch (const std::exception&) {
    return std::nan("");
  }
}

}  // namespace stallscope::testing
