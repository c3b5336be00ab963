// source_settings.h — one configured feed source (the `sources:` list of the
// YAML config): its type, its type's connection settings and its record
// format. Filled by io/source_config_loader.h; used by heftd's SourceSet and
// `heft replay --source`. Plain data; thread-agnostic.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

#include "core/record/format_settings.h"
#include "core/record/line_framer.h"

namespace heft {

enum class SourceType { kTcpListen, kTcpConnect, kSerial, kFileFollow, kStdin };
std::string_view SourceTypeName(SourceType type);  // "tcp-listen", ...

enum class SerialParity { kNone, kEven, kOdd };
enum class SerialStopBits { kOne, kOnePointFive, kTwo };
enum class SerialFlowControl { kNone, kSoftware, kHardware };

struct SourceSettings {
  std::string name;  // the `source` of its samples and events
  SourceType type = SourceType::kTcpListen;
  FormatSettings format;  // format.line_id is the source's line_id
  std::size_t max_record_bytes = LineFramer::kDefaultMaxRecord;

  // tcp-listen (address, port) and tcp-connect (host, port).
  std::string address = "127.0.0.1";
  int port = 0;
  std::vector<std::string> allow;  // peer addresses or CIDR prefixes; empty = any
  int max_connections = 64;
  std::string host;
  int connect_timeout_ms = 5000;
  // tcp-connect and serial: reconnect / reopen with exponential backoff.
  int retry_initial_ms = 500;
  int retry_max_ms = 30'000;
  int max_attempts = 0;  // consecutive failed attempts before giving up; 0 = never
  int keepalive_s = 30;  // TCP keepalive idle time; 0 = off

  // serial
  std::string device;
  int baud = 9600;
  int data_bits = 8;
  SerialParity parity = SerialParity::kNone;
  SerialStopBits stop_bits = SerialStopBits::kOne;
  SerialFlowControl flow_control = SerialFlowControl::kNone;

  // file-follow
  std::string path;
  int poll_ms = 200;
  bool start_at_end = true;  // false: read what the file already holds first
};

}  // namespace heft
