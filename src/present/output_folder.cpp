#include "present/output_folder.hpp"

#include <filesystem>

#include "core/error.hpp"
#include "io/atomic_file.hpp"

namespace pcasweep {

OutputFolder::OutputFolder(std::string dir) : dir_(std::move(dir)) {
  std::error_code ec;
  std::filesystem::create_directories(dir_, ec);
  if (ec) throw data_error(dir_ + ": cannot create output folder: " + ec.message());
  if (!std::filesystem::is_directory(dir_, ec))
    throw data_error(dir_ + ": cannot create output folder: a file of that name is in the way");
}

std::string OutputFolder::path(const std::string& name) const { return (std::filesystem::path(dir_) / name).string(); }

void OutputFolder::write(const std::string& name, std::string_view bytes) const { write_file_atomic(path(name), bytes); }

void OutputFolder::write_via(const std::string& name, const std::function<bool(const std::string&)>& produce) const {
  write_via_temporary(path(name), produce);
}

OutputFolder OutputFolder::subfolder(const std::string& name) const { return OutputFolder(path(name)); }

}  // namespace pcasweep
