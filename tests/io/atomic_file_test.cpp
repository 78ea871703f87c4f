// AtomicFile and write_file_atomic: a file appears whole or not at all; devices and pipes are
// written in place, never replaced; failures name the path and strerror's reason.
#include <doctest/doctest.h>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <thread>

#include "core/error.hpp"
#include "core/interrupt.hpp"
#include "io/atomic_file.hpp"
#include "../support/errors.hpp"
#include "../support/temp_dir.hpp"

namespace fs = std::filesystem;
using pcasweep::testing::error_message_of;
using pcasweep::testing::TempDir;

namespace {

std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace

TEST_CASE("atomic_file: nothing until commit, then the whole file; an abandoned one leaves no trace") {
  TempDir dir;
  const std::string big(200000, 'x');  // larger than the write buffer: goes straight to the descriptor
  {
    pcasweep::AtomicFile f(dir / "a.bin");
    f.write("head", 4);
    f.write(big);
    CHECK_FALSE(fs::exists(dir / "a.bin"));
    f.commit();
  }
  CHECK(slurp(dir / "a.bin") == "head" + big);
  {
    pcasweep::AtomicFile f(dir / "b.bin");
    f.write(big);
  }
  CHECK_FALSE(fs::exists(dir / "b.bin"));
  int entries = 0;
  for (const auto& e : fs::directory_iterator(dir.path())) entries += e.path().filename() != "a.bin";
  CHECK(entries == 0);  // no temporary left behind
}

TEST_CASE("atomic_file: a named pipe is written in place and stays a pipe") {
  // POSIX mkfifo(3): a writer's open blocks until a reader opens the other end.
  TempDir dir;
  const std::string fifo = dir / "pipe";
  REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
  std::string received;
  std::thread reader([&] { received = slurp(fifo); });
  pcasweep::write_file_atomic(fifo, "through the pipe\n");
  reader.join();
  CHECK(received == "through the pipe\n");
  struct stat st {};
  REQUIRE(::stat(fifo.c_str(), &st) == 0);
  CHECK(S_ISFIFO(st.st_mode));
}

TEST_CASE("atomic_file: /dev/full fails with ENOSPC, naming it, and stays a device") {
  // Linux null(4): writes to /dev/full fail with ENOSPC.
  struct stat st {};
  if (::stat("/dev/full", &st) != 0 || !S_ISCHR(st.st_mode)) {
    MESSAGE("skipped: no /dev/full character device here");
    return;
  }
  const std::string m = error_message_of([] { pcasweep::write_file_atomic("/dev/full", "x"); });
  CHECK(m == std::string("/dev/full: cannot write: ") + std::strerror(ENOSPC));
  REQUIRE(::stat("/dev/full", &st) == 0);
  CHECK(S_ISCHR(st.st_mode));
}

TEST_CASE("atomic_file: a missing folder or a file in the way is one error naming the path") {
  TempDir dir;
  const std::string missing = dir / "no/such/x.csv";
  CHECK(error_message_of([&] { pcasweep::write_file_atomic(missing, "x"); }).find(missing + ": ") == 0);
  pcasweep::write_file_atomic(dir / "plain", "x");
  const std::string under_file = dir / "plain/x.csv";
  const std::string m = error_message_of([&] { pcasweep::write_file_atomic(under_file, "x"); });
  CHECK(m.find(under_file + ": ") == 0);
  CHECK(m.find(std::strerror(ENOTDIR)) != std::string::npos);
}

TEST_CASE("interrupt registry: temporaries are created exclusively and slots are reused") {
  TempDir dir;
  const std::string path = dir / "t.tmp-test";
  for (int round = 0; round < 600; ++round) {  // more rounds than slots: forgetting frees them
    int slot = -1;
    const int fd = pcasweep::create_registered_temporary(path, &slot);
    REQUIRE(fd >= 0);
    int again = -1;
    CHECK(pcasweep::create_registered_temporary(path, &again) == -1);  // O_EXCL
    CHECK(errno == EEXIST);
    ::close(fd);
    ::unlink(path.c_str());
    pcasweep::forget_temporary(slot);
  }
}
