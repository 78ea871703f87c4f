// pcasweep/io/inputs.hpp — turn what the user typed into a list of files.
//
// Contract: each spec is one of
//   - a file path                       taken if supported, else noted as skipped
//   - a folder                          its files (sorted by name); with `recursive`
//                                       also every subfolder's, depth first
//   - a glob(3) pattern ("scans/*.png") its matches, sorted; folders among them as above
//   - "@list.txt"                       one spec per line (files, folders, patterns;
//                                       not further @lists); blank lines and lines
//                                       starting with '#' ignored; relative paths are
//                                       taken relative to the list file's folder
// Files are returned in the order met, each once (same canonical path = same file).
// Nothing is opened or decoded here beyond reading list files: whether a file
// really is an image is found out when it is read.
#pragma once

#include <functional>
#include <string>
#include <vector>

namespace pcasweep {

struct InputNote {
  std::string path;    // as met (spec, list entry or folder member)
  std::string reason;  // one line: why it was skipped or failed
};

struct CollectedInputs {
  std::vector<std::string> files;     // supported files, in order, without duplicates
  std::vector<InputNote> skipped;     // not an error: unsupported type, subfolder without --recursive
  std::vector<InputNote> failed;      // an error: missing path, unreadable list, pattern with no match
};

struct CollectOptions {
  bool recursive = false;
  // True when a path has a type the caller can read (e.g. has_image_extension).
  std::function<bool(const std::string& path)> supported;
};

// specs: the command-line inputs. Returns the files and the notes; never throws
// for a bad spec (it lands in `failed`), so one bad input does not stop a batch.
CollectedInputs collect_inputs(const std::vector<std::string>& specs, const CollectOptions& options);

// True if `spec` contains a glob(3) metacharacter (*, ? or [).
bool is_glob_pattern(const std::string& spec);

}  // namespace pcasweep
