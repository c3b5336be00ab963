// alarm_webhook_tls_test.cpp — https:// webhooks: URL parts (RFC 3986
// authority, default port 443 for https per RFC 9110 §4.2.2) and the
// `tls:` keys of a webhook channel: only ca_file; verification cannot be
// turned off; tls without an https URL is refused. The handshake itself is
// tested end to end in tests/process/test_alarm_https.py.
#include <catch2/catch.hpp>

#include <string>
#include <vector>

#include "io/config_loader.h"
#include "io/notify/tls_client.h"
#include "io/notify/webhook_channel.h"

namespace heft {

TEST_CASE("webhook: http and https URLs split into host, port and target", "[alarm][tls]") {
  HttpUrl u;
  REQUIRE(ParseHttpUrl("https://alarms.example/heft/in", &u).ok());
  CHECK(u.tls);
  CHECK(u.host == "alarms.example");
  CHECK(u.port == "443");
  CHECK(u.target == "/heft/in");
  REQUIRE(ParseHttpUrl("http://127.0.0.1:8080", &u).ok());
  CHECK_FALSE(u.tls);
  CHECK(u.port == "8080");
  CHECK(u.target == "/");
  REQUIRE(ParseHttpUrl("https://[::1]:8443/x", &u).ok());
  CHECK(u.host == "::1");
  CHECK(u.port == "8443");
  CHECK_FALSE(ParseHttpUrl("ftp://x/", &u).ok());
  CHECK_FALSE(ParseHttpUrl("https://", &u).ok());
}

TEST_CASE("webhook: tls keys of a webhook channel", "[alarm][tls]") {
  Config config;
  std::vector<std::string> errors;
  const std::string good = R"(alerting:
  channels:
    - {name: it, type: webhook, url: "https://alarms.example/heft", tls: {ca_file: /etc/ca.pem}}
    - {name: sys, type: webhook, url: "https://alarms.example/heft"}
    - {name: plain, type: webhook, url: "http://127.0.0.1:8080/heft"}
)";
  Status s = LoadConfigText(good, "c.yaml", &config, &errors);
  INFO(s.message());
  REQUIRE(s.ok());
  const auto& c = config.alerting.channels;
  REQUIRE(c.size() == 3);
  CHECK(c[0].tls.enabled);
  CHECK(c[0].tls.ca_file == "/etc/ca.pem");
  CHECK(c[1].tls.enabled);
  CHECK(c[1].tls.ca_file.empty());
  CHECK_FALSE(c[2].tls.enabled);

  const std::string bad = R"(alerting:
  channels:
    - {name: a, type: webhook, url: "https://x/", tls: {insecure: true}}
    - {name: b, type: webhook, url: "http://x/", tls: {ca_file: /etc/ca.pem}}
    - {name: c, type: webhook, url: "https://x/", tls: {cert_file: /c.pem, key_file: /k.pem}}
)";
  CHECK_FALSE(LoadConfigText(bad, "c.yaml", &config, &errors).ok());
  std::string all;
  for (const auto& e : errors) all += e + "\n";
  INFO(all);
  CHECK(all.find("alerting.channels[0].tls.insecure: is not offered for webhooks") !=
        std::string::npos);
  CHECK(all.find("alerting.channels[1].tls: applies to https:// URLs only") != std::string::npos);
  CHECK(all.find("alerting.channels[2].tls.cert_file: client certificates are not supported") !=
        std::string::npos);
}

TEST_CASE("webhook: a missing ca_file is reported with its name", "[alarm][tls]") {
  std::unique_ptr<boost::asio::ssl::context> ctx;
  const Status s = MakeTlsClientContext("/nonexistent/heft-ca.pem", &ctx);
  REQUIRE_FALSE(s.ok());
  CHECK(s.message().find("cannot load ca_file /nonexistent/heft-ca.pem") != std::string::npos);
  CHECK(MakeTlsClientContext("", &ctx).ok());  // the system store
}

}  // namespace heft
