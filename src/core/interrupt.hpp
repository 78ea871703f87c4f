// pcasweep/core/interrupt.hpp — SIGINT/SIGTERM leave no temporary file behind.
//
// Contract: long numerical work (BLAS, OpenMP loops) cannot poll a flag, so an
// interrupt does not ask the work to stop; the handler removes what is
// unfinished and ends the process at once:
//   1. every temporary registered here (created by create_registered_temporary
//      and not yet forgotten) is unlinked;
//   2. every folder registered by register_created_folder that is now empty is
//      removed, newest first;
//   3. "pcasweep: interrupted, unfinished files removed" goes to stderr and the
//      process calls _exit(128 + signal): 130 for SIGINT, 143 for SIGTERM.
// Finished files were renamed into place whole (io/atomic_file.hpp), so they
// stay. The handler allocates nothing and calls only async-signal-safe
// functions; the registry is fixed-size arrays of char and atomics.
// A thread that creates a temporary while the handler runs either is waited
// for (at most 0.2 s) and its file removed, or sees the handler first and
// blocks until the process ends, so no file is created after the clean-up.
#pragma once

#include <string>

namespace pcasweep {

// Installs the handler for SIGINT (unless SIGINT was ignored at start, as a
// shell does for background jobs) and SIGTERM, and ignores SIGXFSZ so that a
// write past a file-size limit fails with EFBIG (one clear error line) instead
// of killing the process. Call once, from main, before any work.
void install_interrupt_handlers();

// Creates `path` exclusively (O_WRONLY|O_CREAT|O_EXCL|O_CLOEXEC, mode 0666
// less the umask) and registers it for removal on interrupt. Returns the file
// descriptor and sets *slot; returns -1 with errno set on failure (nothing is
// registered then; ENAMETOOLONG for a path longer than 4095 bytes, EMFILE
// when 512 temporaries are already being written).
int create_registered_temporary(const std::string& path, int* slot);

// The temporary of `slot` was renamed into place or removed: forget it.
void forget_temporary(int slot);

// `path` is a folder this run created; on interrupt it is removed if empty.
// Silently ignored past 64 folders or 4095 bytes (removal is a courtesy).
void register_created_folder(const std::string& path);

}  // namespace pcasweep
