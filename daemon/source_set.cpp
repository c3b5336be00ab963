#include "source_set.h"

#include <string>
#include <utility>

#include <spdlog/spdlog.h>

#include "file_follow_source.h"
#include "ingest_server.h"
#include "io/peer_allow_list.h"
#include "io/record_format_factory.h"
#include "serial_source.h"
#include "stdin_source.h"
#include "tcp_connect_source.h"

namespace heft {

SourceSet::SourceSet(boost::asio::io_context& io, LineEngine& engine) : io_(io), engine_(engine) {}

SourceSet::~SourceSet() = default;

Status SourceSet::Start(const std::vector<SourceSettings>& sources) {
  for (const SourceSettings& settings : sources) {
    const std::string where = "source " + settings.name;
    std::unique_ptr<RecordFormat> format;
    Status status = MakeRecordFormat(settings.format, &format);
    if (!status.ok()) return Status::Error(where + ": " + status.message());
    std::unique_ptr<FeedSource> source;
    switch (settings.type) {
      case SourceType::kTcpListen: {
        PeerAllowList allow;
        status = PeerAllowList::Parse(settings.allow, &allow);
        if (!status.ok()) return Status::Error(where + ": " + status.message());
        auto server = std::make_unique<IngestServer>(io_, engine_, settings.max_connections);
        server->Configure(settings.name, std::move(allow), std::move(format),
                          settings.max_record_bytes);
        status = server->Listen(settings.address, settings.port);
        if (!status.ok()) return Status::Error(where + ": " + status.message());
        const auto endpoint = server->local_endpoint();
        // Not "listening on": that line means "heftd is ready" to supervisors and tests.
        spdlog::info("source {}: tcp-listen bound to {}:{} ({} allowed, {} connections at most)",
                     settings.name, endpoint.address().to_string(), endpoint.port(),
                     settings.allow.empty() ? std::string("any peer")
                                            : std::to_string(settings.allow.size()) + " entries",
                     settings.max_connections);
        listeners_.push_back(std::move(server));
        continue;
      }
      case SourceType::kTcpConnect:
        source = std::make_unique<TcpConnectSource>(io_, engine_, settings, std::move(format));
        break;
      case SourceType::kSerial:
        source = std::make_unique<SerialSource>(io_, engine_, settings, std::move(format));
        break;
      case SourceType::kFileFollow:
        source = std::make_unique<FileFollowSource>(io_, engine_, settings, std::move(format));
        break;
      case SourceType::kStdin:
        source = std::make_unique<StdinSource>(io_, engine_, settings, std::move(format));
        break;
    }
    status = source->Start();
    if (!status.ok()) return status;
    sources_.push_back(std::move(source));
  }
  return Status::Ok();
}

void SourceSet::Stop() {
  if (stopped_) return;
  stopped_ = true;
  for (auto& listener : listeners_) listener->Stop();
  for (auto& source : sources_) source->Stop();
}

}  // namespace heft
