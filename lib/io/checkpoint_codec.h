// checkpoint_codec.h — a line's restart checkpoint (core/monitor/line_checkpoint.h)
// to and from a compact binary blob, as stored in the line_checkpoints table.
//
// Layout: "hLCP", format version (u32), the fields in a fixed order
// (integers as 8-byte little-endian two's complement, doubles as their IEEE
// bits, so values come back bit for bit; bools one byte; strings and vectors
// with a u32 count first; optionals with a presence byte), then an FNV-1a 64
// checksum of everything before it. The decoder checks every length against
// what is left, refuses trailing bytes, a bad checksum or another format
// version with a message saying which; it never trusts the blob. A checkpoint
// in another format is not converted: the line settles anew (the format
// version goes up whenever a field is added). Pure; thread-agnostic.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

#include "core/model/status.h"
#include "core/monitor/line_checkpoint.h"

namespace heft {

inline constexpr std::uint32_t kLineCheckpointFormat = 1;

std::string EncodeLineCheckpoint(const LineCheckpoint& checkpoint);
Status DecodeLineCheckpoint(std::string_view blob, LineCheckpoint* out);

}  // namespace heft
