// history_queries.cpp — read-only history queries over the raw sqlite3 API.
#include "io/history_queries.h"

#include <sqlite3.h>

#include <algorithm>
#include <map>
#include <utility>

#include <fmt/core.h>

#include "core/comply/rule_table.h"
#include "io/rule_table_loader.h"
#include "io/sqlite_store.h"

namespace heft {

struct HistoryReader::Impl {
  std::string path;
  std::unique_ptr<SqliteStore> store;  // events, and the schema checks on open
  sqlite3* db = nullptr;
  bool has_lots = false;

  ~Impl() {
    if (db != nullptr) sqlite3_close_v2(db);
  }

  Status Error(std::string_view operation) const {
    return Status::Error(fmt::format("{}: {}: {} (code {})", path, operation,
                                     db != nullptr ? sqlite3_errmsg(db) : "out of memory",
                                     db != nullptr ? sqlite3_extended_errcode(db) : 0));
  }
};

namespace {

// A prepared statement finalised at scope end (queries here are few and cheap
// to prepare; no cache is needed).
class Statement {
 public:
  Statement() = default;
  ~Statement() { sqlite3_finalize(stmt_); }
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;
  bool Prepare(sqlite3* db, const char* sql) {
    return sqlite3_prepare_v2(db, sql, -1, &stmt_, nullptr) == SQLITE_OK;
  }
  sqlite3_stmt* get() const { return stmt_; }

 private:
  sqlite3_stmt* stmt_ = nullptr;
};

std::string Text(sqlite3_stmt* stmt, int col) {
  const unsigned char* text = sqlite3_column_text(stmt, col);
  if (text == nullptr) return {};
  return {reinterpret_cast<const char*>(text),
          static_cast<std::size_t>(sqlite3_column_bytes(stmt, col))};
}

std::optional<double> OptDouble(sqlite3_stmt* stmt, int col) {
  if (sqlite3_column_type(stmt, col) == SQLITE_NULL) return std::nullopt;
  return sqlite3_column_double(stmt, col);
}

int BindText(sqlite3_stmt* stmt, int idx, const std::string& text) {
  return sqlite3_bind_text(stmt, idx, text.c_str(), static_cast<int>(text.size()),
                           SQLITE_TRANSIENT);
}

}  // namespace

HistoryReader::HistoryReader(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
HistoryReader::~HistoryReader() = default;

Status HistoryReader::Open(const std::string& path, std::unique_ptr<HistoryReader>* out) {
  out->reset();
  auto impl = std::make_unique<Impl>();
  impl->path = path;
  // The store's read-only open says clearly what is wrong with the file
  // (missing, not heft's, newer schema).
  if (Status s = SqliteStore::Open(path, SqliteStore::Mode::kReadOnly, &impl->store); !s.ok()) {
    return s;
  }
  if (sqlite3_open_v2(path.c_str(), &impl->db, SQLITE_OPEN_READONLY | SQLITE_OPEN_NOMUTEX,
                      nullptr) != SQLITE_OK) {
    return impl->Error("opening read-only");
  }
  sqlite3_extended_result_codes(impl->db, 1);
  sqlite3_busy_timeout(impl->db, 2000);
  Statement lots;
  if (!lots.Prepare(impl->db,
                    "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND "
                    "name = 'lots'") ||
      sqlite3_step(lots.get()) != SQLITE_ROW) {
    return impl->Error("reading schema");
  }
  impl->has_lots = sqlite3_column_int(lots.get(), 0) > 0;
  out->reset(new HistoryReader(std::move(impl)));
  return Status::Ok();
}

int HistoryReader::schema_version() const { return impl_->store->schema_version(); }
const std::string& HistoryReader::path() const { return impl_->path; }
bool HistoryReader::HasLots() const { return impl_->has_lots; }

Status HistoryReader::Lines(std::vector<HistoryLine>* out) {
  out->clear();
  Statement stmt;
  if (!stmt.Prepare(impl_->db,
                    "SELECT line, product, nominal_g, target_g, heads FROM lines ORDER BY line")) {
    return impl_->Error("reading lines");
  }
  int rc;
  while ((rc = sqlite3_step(stmt.get())) == SQLITE_ROW) {
    HistoryLine row;
    row.line = Text(stmt.get(), 0);
    row.product = Text(stmt.get(), 1);
    row.nominal_g = OptDouble(stmt.get(), 2);
    row.target_g = OptDouble(stmt.get(), 3);
    row.heads = sqlite3_column_int(stmt.get(), 4);
    out->push_back(std::move(row));
  }
  if (rc != SQLITE_DONE) return impl_->Error("reading lines");
  return Status::Ok();
}

Status HistoryReader::Line(const std::string& line, std::optional<HistoryLine>* out) {
  out->reset();
  std::vector<HistoryLine> lines;
  if (Status s = Lines(&lines); !s.ok()) return s;
  for (HistoryLine& row : lines) {
    if (row.line == line) {
      *out = std::move(row);
      break;
    }
  }
  return Status::Ok();
}

Status HistoryReader::Samples(const SampleRange& range, std::vector<HistorySample>* out) {
  out->clear();
  // Newest-first with a limit for `last`, else oldest-first; both use the
  // (line, time_ms) index. rowid breaks ties in arrival order.
  const char* sql =
      range.last > 0
          ? "SELECT time_ms, grams, head, status, record_index FROM samples WHERE line = ?1 AND "
            "time_ms >= ?2 AND time_ms < ?3 ORDER BY time_ms DESC, rowid DESC LIMIT ?4"
          : "SELECT time_ms, grams, head, status, record_index FROM samples WHERE line = ?1 AND "
            "time_ms >= ?2 AND time_ms < ?3 ORDER BY time_ms, rowid";
  Statement stmt;
  if (!stmt.Prepare(impl_->db, sql)) return impl_->Error("reading samples");
  int rc = BindText(stmt.get(), 1, range.line) |
           sqlite3_bind_int64(stmt.get(), 2, range.from_ms.value_or(INT64_MIN)) |
           sqlite3_bind_int64(stmt.get(), 3, range.to_ms.value_or(INT64_MAX));
  if (range.last > 0)
    rc |= sqlite3_bind_int64(stmt.get(), 4, static_cast<sqlite3_int64>(range.last));
  if (rc != SQLITE_OK) return impl_->Error("reading samples");
  while ((rc = sqlite3_step(stmt.get())) == SQLITE_ROW) {
    HistorySample s;
    s.time_ms = sqlite3_column_int64(stmt.get(), 0);
    s.grams = sqlite3_column_double(stmt.get(), 1);
    s.head =
        sqlite3_column_type(stmt.get(), 2) == SQLITE_NULL ? -1 : sqlite3_column_int(stmt.get(), 2);
    s.status = sqlite3_column_int(stmt.get(), 3);
    s.record_index = sqlite3_column_int64(stmt.get(), 4);
    out->push_back(s);
  }
  if (rc != SQLITE_DONE) return impl_->Error("reading samples");
  if (range.last > 0) std::reverse(out->begin(), out->end());
  return Status::Ok();
}

Status HistoryReader::Events(const EventQuery& query, std::vector<HistoryEvent>* out) {
  out->clear();
  std::vector<EventRow> rows;
  if (Status s = impl_->store->QueryEvents(query, &rows); !s.ok()) return s;
  out->reserve(rows.size());
  for (EventRow& row : rows) out->push_back({std::move(row.finding), std::move(row.message)});
  return Status::Ok();
}

Status HistoryReader::LineStates(std::vector<LineState>* out) {
  out->clear();
  std::map<std::string, LineState> states;
  std::vector<HistoryLine> lines;
  if (Status s = Lines(&lines); !s.ok()) return s;
  for (HistoryLine& row : lines) {
    LineState& state = states[row.line];
    state.configured = true;
    state.line = std::move(row);
  }
  // Lines seen in samples. Version 6 lists its line names (those with rows left
  // after pruning); older files walk the distinct ids by index seeks.
  if (impl_->store->schema_version() >= SqliteStore::kSampleRowsVersion) {
    Statement names;
    if (!names.Prepare(impl_->db,
                       "SELECT line FROM sample_lines l WHERE EXISTS (SELECT 1 FROM sample_rows r "
                       "WHERE r.line_id = l.id)")) {
      return impl_->Error("reading sample lines");
    }
    int rc = SQLITE_OK;
    while ((rc = sqlite3_step(names.get())) == SQLITE_ROW) {
      std::string line = Text(names.get(), 0);
      LineState& state = states[line];
      if (state.line.line.empty()) state.line.line = std::move(line);
    }
    if (rc != SQLITE_DONE) return impl_->Error("reading sample lines");
  } else {
    Statement first, next;
    if (!first.Prepare(impl_->db, "SELECT min(line) FROM samples") ||
        !next.Prepare(impl_->db, "SELECT min(line) FROM samples WHERE line > ?1")) {
      return impl_->Error("reading sample lines");
    }
    std::optional<std::string> line;
    while (true) {
      sqlite3_stmt* stmt = line ? next.get() : first.get();
      sqlite3_reset(stmt);
      if (line && BindText(stmt, 1, *line) != SQLITE_OK) return impl_->Error("reading lines");
      if (sqlite3_step(stmt) != SQLITE_ROW) return impl_->Error("reading sample lines");
      if (sqlite3_column_type(stmt, 0) == SQLITE_NULL) break;
      line = Text(stmt, 0);
      LineState& state = states[*line];
      if (state.line.line.empty()) state.line.line = *line;
    }
  }
  Statement count;
  if (!count.Prepare(impl_->db, "SELECT count(*), max(time_ms) FROM samples WHERE line = ?1")) {
    return impl_->Error("counting samples");
  }
  for (auto& [id, state] : states) {
    sqlite3_reset(count.get());
    if (BindText(count.get(), 1, id) != SQLITE_OK || sqlite3_step(count.get()) != SQLITE_ROW) {
      return impl_->Error("counting samples");
    }
    state.packs = sqlite3_column_int64(count.get(), 0);
    if (sqlite3_column_type(count.get(), 1) != SQLITE_NULL) {
      state.last_pack_ms = sqlite3_column_int64(count.get(), 1);
    }
  }
  std::map<std::string, std::vector<std::string>> open;
  if (Status s = OpenEvents(&open); !s.ok()) return s;
  for (auto& [line, kinds] : open) {
    LineState& state = states[line];
    if (state.line.line.empty()) state.line.line = line;
    state.open_events = std::move(kinds);
  }
  for (auto& [id, state] : states) out->push_back(std::move(state));
  return Status::Ok();
}

Status HistoryReader::OpenEvents(std::map<std::string, std::vector<std::string>>* out) {
  out->clear();
  // The latest transition per (line, kind) is 'raised'. SQLite returns the
  // bare columns of the row holding max(id).
  Statement open;
  if (!open.Prepare(impl_->db,
                    "SELECT line, kind, transition, max(id) FROM events GROUP BY line, kind "
                    "ORDER BY line, kind")) {
    return impl_->Error("reading open events");
  }
  int rc;
  while ((rc = sqlite3_step(open.get())) == SQLITE_ROW) {
    if (Text(open.get(), 2) == "raised") (*out)[Text(open.get(), 0)].push_back(Text(open.get(), 1));
  }
  if (rc != SQLITE_DONE) return impl_->Error("reading open events");
  return Status::Ok();
}

Status HistoryReader::Lots(const std::string& line, std::optional<std::int64_t> from_ms,
                           std::optional<std::int64_t> to_ms, std::vector<LotReport>* out) {
  out->clear();
  if (!impl_->has_lots) return Status::Ok();
  LotQuery query;
  if (!line.empty()) query.line = line;
  query.since_ms = from_ms;
  query.until_ms = to_ms;
  std::vector<LotRow> rows;
  if (Status s = impl_->store->QueryLots(query, &rows); !s.ok()) return s;
  out->reserve(rows.size());
  for (LotRow& row : rows) out->push_back(std::move(row.lot));
  return Status::Ok();
}

void LoadLimitsForLine(const std::string& rules_path, std::optional<double> nominal_g,
                       std::optional<comply::NetContentLimits>* out, std::string* rules_name,
                       std::string* note) {
  out->reset();
  note->clear();
  if (!nominal_g) {
    *note = "the line has no nominal quantity configured";
    return;
  }
  if (rules_path.empty()) {
    *note = "no rule table found";
    return;
  }
  comply::RuleTable table;
  std::vector<std::string> errors;
  if (Status s = LoadRuleTableFile(rules_path, &table, &errors); !s.ok()) {
    *note = "rule table " + rules_path + ": " + s.message();
    return;
  }
  comply::NetContentLimits limits;
  if (Status s = comply::ComputeLimits(table, *nominal_g, false, &limits); !s.ok()) {
    *note = s.message();
    return;
  }
  limits.band = nullptr;  // points into `table`, which ends here
  *out = limits;
  *rules_name = table.name;
}

}  // namespace heft
