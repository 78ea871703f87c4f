// pcasweep/present/output_folder.hpp — the one place an output folder is made and written into.
//
// Contract: constructing an OutputFolder creates the folder (and its parents)
// or throws Error(data) "DIR: cannot create output folder: reason". Every
// file written through it goes to a temporary name in the same folder and is
// renamed when complete (io/atomic_file.hpp), so a failure never leaves half
// a file. The folder is created only when asked: callers validate their
// inputs first, then construct it.
#pragma once

#include <functional>
#include <string>
#include <string_view>

namespace pcasweep {

class OutputFolder {
 public:
  // Creates `dir` if missing. Throws Error(data) when it cannot be created
  // or exists as something other than a folder.
  explicit OutputFolder(std::string dir);

  // The folder as given.
  const std::string& dir() const { return dir_; }

  // "<dir>/<name>" (name may hold subfolders: "jpeg/q50.jpg").
  std::string path(const std::string& name) const;

  // Writes `bytes` to <dir>/<name> atomically. Throws Error(data).
  void write(const std::string& name, std::string_view bytes) const;

  // Lets `produce(temporary_path)` write <dir>/<name> by any means, then
  // renames it into place (io/atomic_file.hpp, write_via_temporary).
  void write_via(const std::string& name, const std::function<bool(const std::string&)>& produce) const;

  // The subfolder <dir>/<name>, created if missing. Throws Error(data).
  OutputFolder subfolder(const std::string& name) const;

 private:
  std::string dir_;
};

}  // namespace pcasweep
