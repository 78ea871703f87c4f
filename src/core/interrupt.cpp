#include "core/interrupt.hpp"

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <csignal>
#include <cstring>
#include <fcntl.h>
#include <time.h>
#include <unistd.h>

namespace pcasweep {
namespace {

constexpr int kSlots = 512;
constexpr int kFolders = 64;
constexpr std::size_t kPathBytes = 4096;

// A slot is free, being filled by its creator, live (the handler may remove
// its file), or taken by the handler (its creator must not reuse it).
enum SlotState : int { kFree = 0, kFilling = 1, kLive = 2, kHandled = 3 };

std::atomic<int> g_state[kSlots];
char g_path[kSlots][kPathBytes];
std::atomic<int> g_folder_count{0};
std::atomic<bool> g_folder_ready[kFolders];
char g_folder[kFolders][kPathBytes];
std::atomic<bool> g_exiting{false};
std::atomic<int> g_creating{0};  // threads between the exiting check and the end of open()

// The handler has started: this thread must not create or forget anything;
// the process is about to end.
[[noreturn]] void wait_for_exit() {
  for (;;) ::pause();
}

void say(const char* text) {
  const ssize_t ignored = ::write(STDERR_FILENO, text, std::strlen(text));
  (void)ignored;
}

void on_interrupt(int sig) {
  if (g_exiting.exchange(true)) wait_for_exit();  // another thread already cleans up
  // Creations already past the exiting check finish their open() and are removed below.
  // Bounded: the interrupted thread may itself be one of them.
  for (int i = 0; i < 200 && g_creating.load() > 0; ++i) {
    const timespec ms{0, 1000000};
    ::nanosleep(&ms, nullptr);
  }
  for (int i = 0; i < kSlots; ++i) {
    int live = kLive;
    if (g_state[i].compare_exchange_strong(live, kHandled)) ::unlink(g_path[i]);
  }
  for (int i = std::min(g_folder_count.load(), kFolders) - 1; i >= 0; --i)
    if (g_folder_ready[i].load()) ::rmdir(g_folder[i]);  // fails, as wanted, unless empty
  say("pcasweep: interrupted, unfinished files removed\n");
  ::_exit(128 + sig);
}

// Claims a free slot and copies `path` into it; -1 when all are taken.
int claim_slot(const std::string& path) {
  for (int i = 0; i < kSlots; ++i) {
    int free = kFree;
    if (!g_state[i].compare_exchange_strong(free, kFilling)) continue;
    std::memcpy(g_path[i], path.c_str(), path.size() + 1);
    g_state[i].store(kLive);
    return i;
  }
  return -1;
}

}  // namespace

void install_interrupt_handlers() {
  struct sigaction action {};
  action.sa_handler = on_interrupt;
  sigemptyset(&action.sa_mask);
  sigaddset(&action.sa_mask, SIGINT);
  sigaddset(&action.sa_mask, SIGTERM);
  struct sigaction before {};
  ::sigaction(SIGINT, nullptr, &before);
  if (before.sa_handler != SIG_IGN) ::sigaction(SIGINT, &action, nullptr);  // a shell's background job keeps ignoring it
  ::sigaction(SIGTERM, &action, nullptr);
  std::signal(SIGXFSZ, SIG_IGN);
}

int create_registered_temporary(const std::string& path, int* slot) {
  if (path.size() >= kPathBytes) {
    errno = ENAMETOOLONG;
    return -1;
  }
  g_creating.fetch_add(1);
  if (g_exiting.load()) wait_for_exit();
  const int i = claim_slot(path);
  if (i < 0) {
    g_creating.fetch_sub(1);
    errno = EMFILE;
    return -1;
  }
  const int fd = ::open(path.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
  const int err = errno;
  g_creating.fetch_sub(1);
  if (fd < 0) forget_temporary(i);
  *slot = i;
  errno = err;
  return fd;
}

void forget_temporary(int slot) {
  if (slot < 0 || slot >= kSlots) return;
  int live = kLive;
  if (!g_state[slot].compare_exchange_strong(live, kFree)) wait_for_exit();  // taken by the handler
}

void register_created_folder(const std::string& path) {
  if (path.size() >= kPathBytes) return;
  const int i = g_folder_count.fetch_add(1);
  if (i >= kFolders) return;
  std::memcpy(g_folder[i], path.c_str(), path.size() + 1);
  g_folder_ready[i].store(true);
}

}  // namespace pcasweep
