#include "alarm_service.h"

#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>
#include <boost/asio/post.hpp>

#include "clock.h"
#include "core/alarm/alarm_message.h"
#include "core/monitor/plant.h"
#include "io/alarm_json.h"

namespace heft {
namespace {

// Event ids are "RUN-SEQ": RUN is this daemon start (ms since the epoch, hex),
// so ids stay unique across restarts without reading the database.
std::string RunId(std::int64_t now_ms) { return fmt::format("{:x}", now_ms); }

}  // namespace

AlarmService::AlarmService(boost::asio::io_context& io, AlertingSettings settings,
                           const Clock& clock)
    : io_(io),
      settings_(std::move(settings)),
      clock_(clock),
      book_(settings_.alarm, RunId(clock.NowMs())) {}

AlarmService::~AlarmService() { Stop(); }

Status AlarmService::Start(const std::string& db_path, const Plant& plant) {
  plant_ = &plant;
  if (Status s = AlarmStore::Open(db_path, AlarmStore::Mode::kReadWrite, &store_); !s.ok()) {
    return s;
  }
  // Carry over what an earlier run left unfinished, and its numbering.
  std::vector<RestoredAlarm> unfinished;
  std::int64_t last_seq = 0;
  if (Status s = store_->Unfinished(&unfinished, &last_seq); !s.ok()) {
    return Status::Error("restoring alarms: " + s.message());
  }
  scratch_.clear();
  book_.Restore(unfinished, last_seq + 1, clock_.NowMs(), &scratch_);
  if (!unfinished.empty() || last_seq > 0) {
    spdlog::info("alarms: {} carried over from the last run, sequence continues at {}",
                 unfinished.size(), book_.next_seq());
  }
  const Clock* clock = &clock_;
  for (const ChannelSettings& c : settings_.channels) {
    if (c.type == ChannelType::kLog) continue;
    auto log = [this, name = c.name](DeliveryWorker::LogLevel level, std::string message) {
      // spdlog's sinks here are single-threaded: log on the loop's thread.
      boost::asio::post(io_, [level, message = std::move(message)] {
        if (level == DeliveryWorker::LogLevel::kWarn) {
          spdlog::warn("{}", message);
        } else {
          spdlog::info("{}", message);
        }
      });
    };
    auto worker =
        std::make_unique<DeliveryWorker>(db_path, c.name, settings_.outbox, MakeChannel(c),
                                         std::move(log), [clock] { return clock->NowMs(); });
    if (Status s = worker->Start(); !s.ok()) return s;
    workers_.push_back(std::move(worker));
  }
  Handle(scratch_);  // floods ended by the restart, now that the workers listen
  return Status::Ok();
}

void AlarmService::OnFindings(const std::vector<Finding>& findings) {
  if (store_ == nullptr) return;
  scratch_.clear();
  book_.OnFindings(findings, clock_.NowMs(), &scratch_);
  Handle(scratch_);
}

void AlarmService::Tick() {
  if (store_ == nullptr) return;
  scratch_.clear();
  book_.Advance(clock_.NowMs(), &scratch_);
  Handle(scratch_);
  ApplyRequests();
  if (!unrecorded_.empty()) Flush();
}

void AlarmService::ApplyRequests() {
  std::vector<AlarmRequest> requests;
  if (Status s = store_->PendingRequests(&requests); !s.ok()) {
    spdlog::warn("alarm requests: {}", s.message());
    return;
  }
  for (const AlarmRequest& r : requests) {
    scratch_.clear();
    const std::int64_t now = clock_.NowMs();
    Status applied;
    if (r.action == "ack") {
      applied = book_.Acknowledge(r.alarm_id, r.who, r.note, now, &scratch_);
    } else if (r.action == "shelve") {
      applied = book_.Shelve(r.alarm_id, r.shelve_ms, r.who, r.note, now, &scratch_);
    } else if (r.action == "unshelve") {
      applied = book_.Unshelve(r.alarm_id, r.who, r.note, now, &scratch_);
    } else {
      applied = Status::Error("unknown action \"" + r.action + "\"");
    }
    // The transitions first, so a CLI that sees "done" also finds them stored.
    Handle(scratch_);
    std::string result = applied.ok() ? std::string("applied") : applied.message();
    if (applied.ok()) {
      for (const AlarmTransition& t : scratch_) {
        if (t.alarm_id == r.alarm_id && t.cause == AlarmCause::kOperator) {
          result = fmt::format("{}: {} -> {} ({})", t.alarm_id, AlarmStateName(t.from),
                               AlarmStateName(t.to), t.event_id);
        }
      }
    }
    if (Status s = store_->FinishRequest(r.id, applied.ok(), result, clock_.NowMs()); !s.ok()) {
      spdlog::warn("alarm requests: {}", s.message());
    }
    spdlog::info("alarm request {} ({} {} by {}): {}", r.id, r.action, r.alarm_id, r.who,
                 applied.ok() ? result : "refused: " + result);
  }
}

void AlarmService::Handle(std::vector<AlarmTransition>& transitions) {
  if (transitions.empty()) return;
  const std::int64_t now = clock_.NowMs();
  for (AlarmTransition& t : transitions) {
    const LineSettings* line = t.line.empty() ? nullptr : &plant_->SettingsFor(t.line);
    t.message = AlarmMessage(t, line, settings_.catalog, &settings_.alarm);
    TransitionRecord record;
    record.transition = t;
    record.json = AlarmTransitionToJson(t);
    record.expires_ms = now + settings_.outbox.expire_ms;
    for (const ChannelSettings& c : settings_.channels) {
      if (!RouteMatches(c.route, t)) continue;
      if (c.type == ChannelType::kLog) {
        const std::string text =
            fmt::format("ALARM {} {} -> {} [{}] {}", t.alarm_id, AlarmStateName(t.from),
                        AlarmStateName(t.to), AlarmPriorityName(t.priority), t.message);
        if (t.to == AlarmState::kActiveUnack) {
          spdlog::warn("{}", text);
        } else {
          spdlog::info("{}", text);
        }
      } else {
        record.channels.push_back(c.name);
      }
    }
    unrecorded_.push_back(std::move(record));
  }
  Flush();
}

void AlarmService::Flush() {
  if (unrecorded_.empty()) return;
  const Status s = store_->Record(unrecorded_, clock_.NowMs());
  if (!s.ok()) {
    if (!record_failing_)
      spdlog::error("cannot record alarm transitions (will retry): {}", s.message());
    record_failing_ = true;
    return;
  }
  if (record_failing_) spdlog::info("alarm transitions recorded again");
  record_failing_ = false;
  unrecorded_.clear();
  for (auto& w : workers_) w->Wake();
}

void AlarmService::Stop() {
  if (store_ != nullptr && !unrecorded_.empty()) Flush();
  for (auto& w : workers_) w->Stop();
  workers_.clear();
  store_.reset();
}

}  // namespace heft
