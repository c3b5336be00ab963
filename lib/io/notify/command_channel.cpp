#include "io/notify/command_channel.h"

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cstring>
#include <thread>
#include <vector>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

extern char** environ;

namespace heft {
namespace {

std::string Field(const nlohmann::json& j, const char* key) {
  if (!j.contains(key) || j[key].is_null()) return "";
  if (j[key].is_string()) return j[key].get<std::string>();
  return j[key].dump();
}

}  // namespace

Status CommandChannel::Deliver(const OutboxItem& item) {
  const auto j = nlohmann::json::parse(item.payload, nullptr, false);
  if (j.is_discarded()) return Status::Error("command: outbox payload is not JSON");

  std::vector<std::string> env_strings;
  for (char** e = environ; e != nullptr && *e != nullptr; ++e) {
    if (std::strncmp(*e, "HEFT_", 5) != 0) env_strings.emplace_back(*e);
  }
  const std::pair<const char*, const char*> kVars[] = {
      {"HEFT_EVENT_ID", "event_id"}, {"HEFT_ALARM", "alarm"},
      {"HEFT_LINE", "line"},         {"HEFT_AREA", "area"},
      {"HEFT_KIND", "kind"},         {"HEFT_HEAD", "head"},
      {"HEFT_STATE", "state"},       {"HEFT_PREV_STATE", "prev_state"},
      {"HEFT_PRIORITY", "priority"}, {"HEFT_WHY", "why"},
      {"HEFT_WHO", "who"},           {"HEFT_MESSAGE", "message"}};
  for (const auto& [var, key] : kVars)
    env_strings.push_back(std::string(var) + "=" + Field(j, key));
  std::vector<char*> envp;
  for (std::string& s : env_strings) envp.push_back(s.data());
  envp.push_back(nullptr);
  std::vector<std::string> args = settings_.argv;
  std::vector<char*> argv;
  for (std::string& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);

  int pipe_fds[2];
  if (::pipe2(pipe_fds, O_CLOEXEC) != 0) {
    return Status::Error(std::string("command: pipe: ") + std::strerror(errno));
  }
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, pipe_fds[0], STDIN_FILENO);
  posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, "/dev/null", O_WRONLY, 0);
  posix_spawnattr_t attr;
  posix_spawnattr_init(&attr);
  // The child starts with default signal handling and an empty mask.
  sigset_t none, all;
  sigemptyset(&none);
  sigfillset(&all);
  posix_spawnattr_setsigmask(&attr, &none);
  posix_spawnattr_setsigdefault(&attr, &all);
  posix_spawnattr_setflags(&attr, POSIX_SPAWN_SETSIGMASK | POSIX_SPAWN_SETSIGDEF);
  pid_t pid = 0;
  const int rc = posix_spawnp(&pid, argv[0], &actions, &attr, argv.data(), envp.data());
  posix_spawn_file_actions_destroy(&actions);
  posix_spawnattr_destroy(&attr);
  ::close(pipe_fds[0]);
  if (rc != 0) {
    ::close(pipe_fds[1]);
    return Status::Error(fmt::format("command: cannot start {}: {}", argv[0], std::strerror(rc)));
  }

  const auto deadline =
      std::chrono::steady_clock::now() + std::chrono::milliseconds(settings_.timeout_ms);
  // Feed stdin without blocking past the deadline; a program that does not
  // read it just sees EPIPE on our side.
  ::fcntl(pipe_fds[1], F_SETFL, O_NONBLOCK);
  const std::string input = item.payload + "\n";
  std::string_view rest = input;
  while (!rest.empty() && std::chrono::steady_clock::now() < deadline) {
    const ssize_t n = ::write(pipe_fds[1], rest.data(), rest.size());
    if (n > 0) {
      rest.remove_prefix(static_cast<std::size_t>(n));
    } else if (n < 0 && errno == EAGAIN) {
      pollfd p{pipe_fds[1], POLLOUT, 0};
      ::poll(&p, 1, 20);
    } else {
      break;  // EPIPE: the program closed its stdin
    }
  }
  ::close(pipe_fds[1]);

  int status = 0;
  while (true) {
    const pid_t done = ::waitpid(pid, &status, WNOHANG);
    if (done == pid) break;
    if (done < 0 && errno != EINTR) return Status::Error("command: waitpid failed");
    if (std::chrono::steady_clock::now() >= deadline) {
      ::kill(pid, SIGKILL);
      ::waitpid(pid, &status, 0);
      return Status::Error(fmt::format("command: {} ran longer than {} ms and was killed", argv[0],
                                       settings_.timeout_ms));
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
  if (WIFEXITED(status) && WEXITSTATUS(status) == 0) return Status::Ok();
  if (WIFEXITED(status)) {
    return Status::Error(
        fmt::format("command: {} exited with status {}", argv[0], WEXITSTATUS(status)));
  }
  return Status::Error(fmt::format("command: {} ended by signal {}", argv[0], WTERMSIG(status)));
}

}  // namespace heft
