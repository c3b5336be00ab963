#include "io/notify/tls_client.h"

#include <openssl/ssl.h>
#include <openssl/x509v3.h>

#include <boost/asio/ip/address.hpp>

#include <fmt/format.h>

namespace heft {

namespace ssl = boost::asio::ssl;

Status MakeTlsClientContext(const std::string& ca_file, std::unique_ptr<ssl::context>* out) {
  auto ctx = std::make_unique<ssl::context>(ssl::context::tls_client);
  ctx->set_options(ssl::context::default_workarounds | ssl::context::no_sslv2 |
                   ssl::context::no_sslv3 | ssl::context::no_tlsv1 | ssl::context::no_tlsv1_1);
  SSL_CTX_set_min_proto_version(ctx->native_handle(), TLS1_2_VERSION);
  boost::system::error_code ec;
  ctx->set_verify_mode(ssl::verify_peer, ec);
  if (ca_file.empty()) {
    ctx->set_default_verify_paths(ec);
    if (ec) return Status::Error("cannot load the system CA store: " + ec.message());
  } else {
    ctx->load_verify_file(ca_file, ec);
    if (ec) return Status::Error(fmt::format("cannot load ca_file {}: {}", ca_file, ec.message()));
  }
  *out = std::move(ctx);
  return Status::Ok();
}

Status ExpectServerName(SSL* ssl, const std::string& host) {
  X509_VERIFY_PARAM* param = SSL_get0_param(ssl);
  boost::system::error_code not_ip;
  boost::asio::ip::make_address(host, not_ip);
  if (!not_ip) {
    if (X509_VERIFY_PARAM_set1_ip_asc(param, host.c_str()) != 1) {
      return Status::Error("cannot set the expected IP address " + host);
    }
    return Status::Ok();
  }
  if (SSL_set_tlsext_host_name(ssl, host.c_str()) != 1) {
    return Status::Error("cannot set the server name (SNI) " + host);
  }
  X509_VERIFY_PARAM_set_hostflags(param, X509_CHECK_FLAG_NO_PARTIAL_WILDCARDS);
  if (X509_VERIFY_PARAM_set1_host(param, host.c_str(), host.size()) != 1) {
    return Status::Error("cannot set the expected host name " + host);
  }
  return Status::Ok();
}

std::string DescribeHandshakeFailure(SSL* ssl, const boost::system::error_code& ec,
                                     const std::string& ca_file) {
  const long verify = SSL_get_verify_result(ssl);
  if (verify == X509_V_OK) return ec.message();
  return fmt::format("certificate verify failed: {} (trusted: {})",
                     X509_verify_cert_error_string(verify),
                     ca_file.empty() ? std::string("the system CA store") : "ca_file " + ca_file);
}

}  // namespace heft
