// tls_client.h — the client side of TLS for alarm delivery (https://
// webhooks): a context that verifies the server, the expected name of one
// connection, and a failure message that names the certificate problem.
//
// Verification is always on: the chain must lead to ca_file (PEM, one or more
// CA certificates) or, without one, to the system store (/etc/ssl/certs), and
// the certificate must name the host of the URL (DNS SAN for a name, IP SAN
// for an address). TLS 1.2 at least. Used by WebhookChannel on its
// DeliveryWorker thread; a context is shared by the connections of one channel.
#pragma once

#include <memory>
#include <string>

#include <boost/asio/ssl/context.hpp>
#include <boost/system/error_code.hpp>

#include "core/model/status.h"

namespace heft {

Status MakeTlsClientContext(const std::string& ca_file,
                            std::unique_ptr<boost::asio::ssl::context>* out);

// Before the handshake: SNI (names only, RFC 6066 §3) and the name or address
// the certificate must carry.
Status ExpectServerName(SSL* ssl, const std::string& host);

// "certificate verify failed: unable to get local issuer certificate (trusted:
// ca_file /x.pem)" when the chain or the name was refused, else the error.
std::string DescribeHandshakeFailure(SSL* ssl, const boost::system::error_code& ec,
                                     const std::string& ca_file);

}  // namespace heft
