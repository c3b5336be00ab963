#include "ingest_source.h"

#include <utility>

#include <fmt/format.h>
#include <spdlog/spdlog.h>

#include "clock.h"
#include "core/record/native_record.h"
#include "line_engine.h"

namespace heft {

IngestSource::IngestSource(LineEngine& engine, std::string name, const Clock& clock)
    : engine_(engine),
      name_(std::move(name)),
      clock_(clock),
      ingest_(engine.mutable_plant(), *this),
      window_start_ms_(clock.NowMs()) {}

void IngestSource::Feed(std::string_view bytes) {
  if (finished_) return;
  const IngestCounters before = ingest_.counters();
  findings_.clear();
  ingest_.Feed(bytes, clock_.NowMs(), &findings_);
  AfterIngest(before);
}

void IngestSource::Finish() {
  if (finished_) return;
  finished_ = true;
  const IngestCounters before = ingest_.counters();
  findings_.clear();
  ingest_.Finish(clock_.NowMs(), &findings_);
  AfterIngest(before);
  ReportSuppressed();
}

void IngestSource::UseFormat(std::unique_ptr<RecordFormat> format, std::size_t max_record) {
  ingest_.SetFormat(std::move(format), max_record);
}

void IngestSource::Restart() {
  if (finished_) return;
  const IngestCounters before = ingest_.counters();
  findings_.clear();
  ingest_.Restart();
  AfterIngest(before);
}

void IngestSource::AfterIngest(const IngestCounters& before) {
  const IngestCounters& after = ingest_.counters();
  engine_.OnCounters(before, after);
  engine_.OnFindings(name_, findings_);
  if (after.refused > before.refused && !refusal_logged_) {
    refusal_logged_ = true;  // once per source; the session summary has the count
    spdlog::warn(
        "source {}: records refused: the plant already monitors its maximum number of "
        "lines (plant max_lines); further refusals from this source are only counted",
        name_);
  }
}

void IngestSource::OnPack(std::string_view line, const Pack& pack) {
  engine_.OnPack(name_, line, pack);
}

void IngestSource::OnProblem(const RecordProblem& problem) {
  // Hand on the findings of earlier records in this chunk first, so the log
  // keeps record order.
  engine_.OnFindings(name_, findings_);
  findings_.clear();
  const std::int64_t now = clock_.NowMs();
  if (now - window_start_ms_ >= kProblemWindowMs || now < window_start_ms_) {
    ReportSuppressed();
    window_start_ms_ = now;
    shown_in_window_ = 0;
  }
  if (shown_in_window_ >= kProblemLinesPerWindow) {
    ++suppressed_in_window_;
    return;
  }
  ++shown_in_window_;
  std::string field;
  if (!problem.field_name.empty()) {  // a configured format: name the field
    field = problem.field >= 0
                ? fmt::format(" in field {} (column {})", problem.field_name, problem.field + 1)
                : fmt::format(" in field {}", problem.field_name);
  } else if (problem.field >= 0) {
    field = fmt::format(" in field {}", problem.field + 1);
  }
  spdlog::warn("malformed record: source {} record {}: {}{} ({} bytes): \"{}\"", name_,
               problem.index, RecordErrorName(problem.error), field, problem.length,
               problem.excerpt);
}

void IngestSource::ReportSuppressed() {
  if (suppressed_in_window_ == 0) return;
  spdlog::warn(
      "malformed record: source {}: {} more not logged (rate limit {} per {} s); {} "
      "malformed so far",
      name_, suppressed_in_window_, kProblemLinesPerWindow, kProblemWindowMs / 1000,
      ingest_.counters().malformed);
  suppressed_in_window_ = 0;
}

}  // namespace heft
