// peer_allow_list.h — which peer addresses a tcp-listen source accepts:
// exact addresses ("10.20.0.15", "::1") and prefixes ("10.20.0.0/24",
// "fd00::/8"). An empty list allows every peer. IPv4-mapped IPv6 peers
// (::ffff:a.b.c.d) are matched as IPv4. Used by the config loader (to check
// entries) and heftd's IngestServer. Immutable after Parse; thread-safe.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <vector>

#include <boost/asio/ip/address.hpp>

#include "core/model/status.h"

namespace heft {

class PeerAllowList {
 public:
  // Parses every entry; the error names the first bad one.
  static Status Parse(const std::vector<std::string>& entries, PeerAllowList* out);
  // Checks one entry (for the config loader); empty string when fine.
  static std::string CheckEntry(const std::string& entry);

  bool Allows(const boost::asio::ip::address& peer) const;
  bool empty() const { return rules_.empty(); }

 private:
  struct Rule {
    bool v6 = false;
    std::array<std::uint8_t, 16> bytes{};
    int prefix = 0;  // bits that must match
  };
  static bool ParseRule(const std::string& entry, Rule* rule, std::string* error);
  std::vector<Rule> rules_;
};

}  // namespace heft
