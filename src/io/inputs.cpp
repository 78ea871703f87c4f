#include "io/inputs.hpp"

#include <glob.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>

namespace pcasweep {

namespace fs = std::filesystem;

bool is_glob_pattern(const std::string& spec) { return spec.find_first_of("*?[") != std::string::npos; }

namespace {

class Collector {
 public:
  Collector(const CollectOptions& options, CollectedInputs& out) : options_(options), out_(out) {}

  void spec(const std::string& s, bool from_list) {
    if (!s.empty() && s[0] == '@') {
      if (from_list) {
        out_.failed.push_back({s, "list files cannot name other list files"});
        return;
      }
      list(s.substr(1));
      return;
    }
    std::error_code ec;
    const fs::file_status st = fs::status(s, ec);
    if (!ec && fs::exists(st)) {
      path(s, st, true);
      return;
    }
    if (is_glob_pattern(s)) {
      pattern(s);
      return;
    }
    out_.failed.push_back({s, "no such file or folder"});
  }

 private:
  void path(const std::string& p, const fs::file_status& st, bool named) {
    if (fs::is_directory(st)) {
      if (named || options_.recursive) folder(p);
      else out_.skipped.push_back({p, "subfolder (use --recursive to include subfolders)"});
      return;
    }
    if (!fs::is_regular_file(st)) {
      out_.skipped.push_back({p, "not a regular file"});
      return;
    }
    if (options_.supported && !options_.supported(p)) {
      out_.skipped.push_back({p, "unsupported file type"});
      return;
    }
    std::error_code ec;
    fs::path canonical = fs::weakly_canonical(p, ec);
    const std::string key = ec ? p : canonical.string();
    if (seen_.insert(key).second) out_.files.push_back(p);
  }

  void folder(const std::string& dir) {
    std::error_code ec;
    std::vector<fs::path> entries;
    for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) entries.push_back(it->path());
    if (ec) {
      out_.failed.push_back({dir, "cannot list folder: " + ec.message()});
      return;
    }
    std::sort(entries.begin(), entries.end());
    for (const auto& e : entries) {
      std::error_code sec;
      const fs::file_status st = fs::status(e, sec);
      if (sec) {
        out_.failed.push_back({e.string(), "cannot stat: " + sec.message()});
        continue;
      }
      path(e.string(), st, false);
    }
  }

  void pattern(const std::string& pat) {
    glob_t g{};
    const int rc = ::glob(pat.c_str(), GLOB_ERR, nullptr, &g);
    if (rc == GLOB_NOMATCH) {
      out_.failed.push_back({pat, "pattern matched no file"});
    } else if (rc != 0) {
      out_.failed.push_back({pat, "pattern could not be expanded (read error or out of memory)"});
    } else {
      std::vector<std::string> matches(g.gl_pathv, g.gl_pathv + g.gl_pathc);
      std::sort(matches.begin(), matches.end());
      for (const auto& m : matches) {
        std::error_code ec;
        const fs::file_status st = fs::status(m, ec);
        if (ec) out_.failed.push_back({m, "cannot stat: " + ec.message()});
        else path(m, st, true);
      }
    }
    globfree(&g);
  }

  void list(const std::string& list_path) {
    std::ifstream in(list_path);
    if (!in) {
      out_.failed.push_back({"@" + list_path, "cannot read list file"});
      return;
    }
    const fs::path base = fs::path(list_path).parent_path();
    std::string line;
    while (std::getline(in, line)) {
      if (!line.empty() && line.back() == '\r') line.pop_back();
      const auto first = line.find_first_not_of(" \t");
      if (first == std::string::npos || line[first] == '#') continue;
      const auto last = line.find_last_not_of(" \t");
      std::string entry = line.substr(first, last - first + 1);
      if (fs::path(entry).is_relative() && entry[0] != '@' && !base.empty()) entry = (base / entry).string();
      spec(entry, true);
    }
    if (in.bad()) out_.failed.push_back({"@" + list_path, "error while reading list file"});
  }

  const CollectOptions& options_;
  CollectedInputs& out_;
  std::set<std::string> seen_;
};

}  // namespace

CollectedInputs collect_inputs(const std::vector<std::string>& specs, const CollectOptions& options) {
  CollectedInputs out;
  Collector c(options, out);
  for (const auto& s : specs) c.spec(s, false);
  return out;
}

}  // namespace pcasweep
