#include "line_engine.h"

#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>

#include "batch_writer.h"
#include "clock.h"
#include "core/monitor/operator_message.h"
#include "ingest_source.h"

namespace heft {
namespace {
// Source name given to findings that the housekeeping tick (not a record) raised.
constexpr const char* kTimerSource = "heftd:clock";
}  // namespace

LineEngine::LineEngine(PlantSettings settings, BatchWriter& writer, const Clock& clock,
                       bool keep_samples)
    : plant_(std::move(settings)), writer_(writer), clock_(clock), keep_samples_(keep_samples) {}

LineEngine::~LineEngine() = default;

std::unique_ptr<IngestSource> LineEngine::OpenSource(std::string name) {
  return std::make_unique<IngestSource>(*this, std::move(name), clock_);
}

void LineEngine::OnPack(const std::string& source, std::string_view line, const Pack& pack) {
  if (!keep_samples_) return;
  SampleRow row;
  row.line.assign(line);
  row.source = source;
  row.record_index = pack.index;
  row.time_ms = pack.time_ms;
  row.grams = pack.grams;
  row.head = pack.head;
  row.status = pack.status;
  writer_.AddSample(std::move(row));
}

void LineEngine::OnFindings(const std::string& source, const std::vector<Finding>& findings) {
  for (const Finding& finding : findings) {
    std::string message = OperatorMessage(finding, plant_.SettingsFor(finding.line));
    if (finding.transition == Transition::kRaised) {
      ++totals_.raised;
      spdlog::warn("ALERT {}", message);
    } else {
      ++totals_.cleared;
      spdlog::info("CLEAR {}", message);
    }
    EventRow row;
    row.finding = finding;
    row.message = std::move(message);
    row.source = source;
    row.recorded_ms = clock_.NowMs();
    writer_.AddEvent(std::move(row));
  }
  QueueClosedLots(source);
  if (findings_listener_ && !findings.empty()) findings_listener_(findings);
}

void LineEngine::QueueClosedLots(const std::string& source) {
  for (LotReport& lot : plant_.TakeClosedLots()) {
    const comply::LotFigures& f = lot.figures;
    std::string verdicts;
    for (const LotVerdict& v : lot.verdicts) {
      verdicts += fmt::format("{}{} {}", verdicts.empty() ? "" : ", ", v.rule_id, v.state);
    }
    spdlog::info(
        "LOT {}{}: {} packs, mean {:.2f} g, s {:.2f} g, {} below T1, {} below T2, "
        "giveaway {:.2f} kg; {}",
        lot.lot_id, lot.partial ? " (partial)" : "", f.count, f.mean_g, f.s_g, f.t1_count,
        f.t2_count, f.giveaway_g / 1000.0, verdicts);
    LotRow row;
    row.lot = std::move(lot);
    row.source = source;
    row.recorded_ms = clock_.NowMs();
    writer_.AddLot(std::move(row));
  }
}

void LineEngine::CloseAllLots() {
  plant_.CloseAllLots(true);
  QueueClosedLots("heftd:shutdown");
}

void LineEngine::RestoreCheckpoints(const std::vector<LineCheckpoint>& checkpoints) {
  for (const Plant::RestoreNote& note : plant_.RestoreCheckpoints(checkpoints)) {
    if (!note.what.empty()) spdlog::warn("restart: {}", note.what);
    spdlog::info("restart: line {}: {}{}", note.line,
                 note.monitor_restored ? "monitor continues" : "settles anew",
                 note.lot_continued ? ", open lot continues"
                                    : (note.lot_closed ? ", open lot closed as partial" : ""));
  }
  QueueClosedLots("heftd:restart");
}

void LineEngine::Reconfigure(PlantSettings settings) {
  for (const Plant::ReloadNote& note : plant_.Reconfigure(std::move(settings))) {
    if (note.restarted) {
      spdlog::info("reload: line {}: {}; re-baselined (settling again, open lot closed)", note.line,
                   note.what);
    } else {
      spdlog::warn("reload: line {}: {}", note.line, note.what);
    }
  }
  QueueClosedLots("heftd:reload");
}

void LineEngine::OnCounters(const IngestCounters& before, const IngestCounters& after) {
  totals_.records += after.records - before.records;
  totals_.accepted += after.accepted - before.accepted;
  totals_.malformed += after.malformed - before.malformed;
  totals_.refused += after.refused - before.refused;
}

void LineEngine::AdvanceClock() {
  tick_findings_.clear();
  plant_.AdvanceTo(clock_.NowMs(), totals_.records, &tick_findings_);
  OnFindings(kTimerSource, tick_findings_);
}

}  // namespace heft
