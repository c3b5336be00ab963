// peer_allow_list.cpp — see peer_allow_list.h.
#include "io/peer_allow_list.h"

#include <algorithm>
#include <charconv>
#include <system_error>
#include <utility>

namespace heft {

bool PeerAllowList::ParseRule(const std::string& entry, Rule* rule, std::string* error) {
  const std::size_t slash = entry.find('/');
  const std::string host = entry.substr(0, slash);
  boost::system::error_code ec;
  boost::asio::ip::address address = boost::asio::ip::make_address(host, ec);
  if (ec) {
    *error = "\"" + entry + "\" is not an IP address or prefix (e.g. 10.20.0.0/24)";
    return false;
  }
  if (address.is_v6() && address.to_v6().is_v4_mapped()) {
    address = boost::asio::ip::make_address_v4(boost::asio::ip::v4_mapped, address.to_v6());
  }
  rule->v6 = address.is_v6();
  const int bits = rule->v6 ? 128 : 32;
  if (rule->v6) {
    rule->bytes = address.to_v6().to_bytes();
  } else {
    const auto b = address.to_v4().to_bytes();
    std::copy(b.begin(), b.end(), rule->bytes.begin());
  }
  rule->prefix = bits;
  if (slash != std::string::npos) {
    const std::string text = entry.substr(slash + 1);
    int prefix = -1;
    const auto [end, fc] = std::from_chars(text.data(), text.data() + text.size(), prefix);
    if (text.empty() || fc != std::errc() || end != text.data() + text.size() || prefix < 0 ||
        prefix > bits) {
      *error = "\"" + entry + "\": prefix length must be 0.." + std::to_string(bits);
      return false;
    }
    rule->prefix = prefix;
  }
  return true;
}

std::string PeerAllowList::CheckEntry(const std::string& entry) {
  Rule rule;
  std::string error;
  return ParseRule(entry, &rule, &error) ? std::string() : error;
}

Status PeerAllowList::Parse(const std::vector<std::string>& entries, PeerAllowList* out) {
  PeerAllowList list;
  for (const std::string& entry : entries) {
    Rule rule;
    std::string error;
    if (!ParseRule(entry, &rule, &error)) return Status::Error("allow: " + error);
    list.rules_.push_back(rule);
  }
  *out = std::move(list);
  return Status::Ok();
}

bool PeerAllowList::Allows(const boost::asio::ip::address& peer_in) const {
  if (rules_.empty()) return true;
  boost::asio::ip::address peer = peer_in;
  if (peer.is_v6() && peer.to_v6().is_v4_mapped()) {
    peer = boost::asio::ip::make_address_v4(boost::asio::ip::v4_mapped, peer.to_v6());
  }
  std::array<std::uint8_t, 16> bytes{};
  if (peer.is_v6()) {
    bytes = peer.to_v6().to_bytes();
  } else {
    const auto b = peer.to_v4().to_bytes();
    std::copy(b.begin(), b.end(), bytes.begin());
  }
  for (const Rule& rule : rules_) {
    if (rule.v6 != peer.is_v6()) continue;
    int bits = rule.prefix;
    bool match = true;
    for (std::size_t i = 0; bits > 0 && match; ++i, bits -= 8) {
      const std::uint8_t mask = bits >= 8 ? 0xFF : static_cast<std::uint8_t>(0xFF << (8 - bits));
      match = (bytes[i] & mask) == (rule.bytes[i] & mask);
    }
    if (match) return true;
  }
  return false;
}

}  // namespace heft
