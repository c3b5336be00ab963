// status.h — an error as a value, for library boundaries.
//
// OK is cheap (an empty string). Errors carry a one-line, human-readable
// reason that says where and why, e.g. "heft.db: disk I/O error (code 10)".
#pragma once

#include <string>
#include <utility>

namespace heft {

class Status {
 public:
  Status() = default;
  static Status Ok() { return Status(); }
  static Status Error(std::string message) { return Status(std::move(message)); }

  bool ok() const { return message_.empty(); }
  const std::string& message() const { return message_; }

 private:
  explicit Status(std::string message) : message_(std::move(message)) {
    if (message_.empty()) message_ = "unspecified error";
  }
  std::string message_;
};

}  // namespace heft
