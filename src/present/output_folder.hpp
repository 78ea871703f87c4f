// pcasweep/present/output_folder.hpp — the one place an output folder is made and written into.
//
// Contract: constructing an OutputFolder creates the folder (and its parents),
// checks that a file can be created in it, or throws Error(data) "DIR: cannot
// create output folder: reason" / "DIR: cannot write into the output folder:
// reason". Folders it creates are removed on SIGINT/SIGTERM if still empty
// (core/interrupt.hpp). Every
// file written through it goes to a temporary name in the same folder and is
// renamed when complete (io/atomic_file.hpp), so a failure never leaves half
// a file. The folder is created only when asked: callers validate their
// inputs first, then construct it.
#pragma once

#include <string>
#include <string_view>

namespace pcasweep {

class OutputFolder {
 public:
  // Creates `dir` if missing. Throws Error(data) when it cannot be created,
  // exists as something other than a folder, or a file cannot be made in it.
  explicit OutputFolder(std::string dir);

  // The folder as given.
  const std::string& dir() const { return dir_; }

  // "<dir>/<name>" (name may hold subfolders: "jpeg/q50.jpg").
  std::string path(const std::string& name) const;

  // Writes `bytes` to <dir>/<name> atomically. Throws Error(data).
  void write(const std::string& name, std::string_view bytes) const;

  // The subfolder <dir>/<name>, created if missing. Throws Error(data).
  OutputFolder subfolder(const std::string& name) const;

 private:
  // Creates and removes a temporary in the folder. Throws Error(data) naming dir and the reason.
  void check_writable() const;

  std::string dir_;
};

}  // namespace pcasweep
