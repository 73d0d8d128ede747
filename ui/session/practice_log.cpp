// Practice log implementation.
//
// Index
//   1. Small helpers: kinds, times, uids, trace BLOBs, equality
//   2. Schema: v1 and the migrations
//   3. Opening, errors, statements
//   4. Writing attempts
//   5. Reading attempts and history sums
#include "ui/session/practice_log.h"
#include "ui/session/usage_error.h"

#include "ui/session/paths.h"

#include <sqlite3.h>

#include <sys/stat.h>
#include <algorithm>
#include <bit>
#include <cerrno>
#include <chrono>
#include <cstring>
#include <ctime>
#include <fstream>
#include <random>
#include <tuple>
#include <unordered_map>

namespace beatless::ui {

namespace fs = std::filesystem;

// ---- 1. Small helpers ------------------------------------------------------

std::string_view kind_name(AttemptKind kind) { return kind == AttemptKind::hold ? "hold" : "ear"; }

std::optional<AttemptKind> parse_kind(std::string_view text) {
    if (text == "hold") return AttemptKind::hold;
    if (text == "ear") return AttemptKind::ear;
    return std::nullopt;
}

std::string utc_now_iso8601() {
    using namespace std::chrono;
    const auto now = system_clock::now();
    const auto ms = duration_cast<milliseconds>(now.time_since_epoch()).count();
    const std::time_t secs = static_cast<std::time_t>(ms / 1000);
    std::tm tm{};
    gmtime_r(&secs, &tm);
    char buf[64];
    std::snprintf(buf, sizeof buf, "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", tm.tm_year + 1900, tm.tm_mon + 1, tm.tm_mday,
                  tm.tm_hour, tm.tm_min, tm.tm_sec, static_cast<int>(ms % 1000));
    return buf;
}

namespace {

bool digits(std::string_view s, std::size_t at, std::size_t n, int& out) {
    if (at + n > s.size()) return false;
    out = 0;
    for (std::size_t i = at; i < at + n; ++i) {
        if (s[i] < '0' || s[i] > '9') return false;
        out = out * 10 + (s[i] - '0');
    }
    return true;
}

// Checks "YYYY-MM-DD" at the start of s is a real calendar date.
bool valid_date(std::string_view s) {
    int y = 0, m = 0, d = 0;
    if (s.size() < 10 || s[4] != '-' || s[7] != '-') return false;
    if (!digits(s, 0, 4, y) || !digits(s, 5, 2, m) || !digits(s, 8, 2, d)) return false;
    if (y < 1970 || m < 1 || m > 12 || d < 1) return false;
    static constexpr int kDays[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    const bool leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    return d <= kDays[m - 1] + (m == 2 && leap ? 1 : 0);
}

bool valid_time(std::string_view s, std::size_t at, bool with_seconds) {
    int h = 0, mi = 0, sec = 0;
    if (!digits(s, at, 2, h) || s.size() <= at + 2 || s[at + 2] != ':' || !digits(s, at + 3, 2, mi)) return false;
    if (with_seconds && (s.size() <= at + 5 || s[at + 5] != ':' || !digits(s, at + 6, 2, sec))) return false;
    return h < 24 && mi < 60 && sec < 60;
}

}  // namespace

bool is_utc_iso8601(std::string_view s) {
    int ms = 0;
    return s.size() == 24 && valid_date(s) && s[10] == 'T' && valid_time(s, 11, true) && s[19] == '.' &&
           digits(s, 20, 3, ms) && s[23] == 'Z';
}

std::string parse_since(std::string_view text) {
    std::string_view s = text;
    if (!s.empty() && (s.back() == 'Z' || s.back() == 'z')) s.remove_suffix(1);
    const bool ok =
        valid_date(s) && (s.size() == 10 || (s[10] == 'T' && ((s.size() == 16 && valid_time(s, 11, false)) ||
                                                              (s.size() == 19 && valid_time(s, 11, true)))));
    if (!ok)
        throw UsageError("--since '" + std::string(text) +
                         "': not a date (use YYYY-MM-DD or YYYY-MM-DDTHH:MM[:SS], UTC)");
    return std::string(s);
}

std::string new_uid() {
    // Drawn from the system's random source each time (no generator state
    // that a forked child would repeat).
    std::random_device rd;
    char buf[33];
    std::snprintf(buf, sizeof buf, "%08x%08x%08x%08x", rd(), rd(), rd(), rd());
    return buf;
}

bool is_uid(std::string_view s) {
    if (s.size() != 32) return false;
    for (char c : s)
        if (!((c >= '0' && c <= '9') || (c >= 'a' && c <= 'f'))) return false;
    return true;
}

namespace {

std::uint32_t to_little(std::uint32_t v) {
    if constexpr (std::endian::native == std::endian::big)
        v = ((v & 0xffu) << 24) | ((v & 0xff00u) << 8) | ((v >> 8) & 0xff00u) | (v >> 24);
    return v;
}

}  // namespace

std::string encode_trace(const std::vector<TraceRecord>& trace) {
    std::string out(trace.size() * 16, '\0');
    char* p = out.data();
    for (const TraceRecord& r : trace) {
        for (float f : {r.t_s, r.f0_hz, r.dev_cents, r.centre_dev_cents}) {
            const std::uint32_t v = to_little(std::bit_cast<std::uint32_t>(f));
            std::memcpy(p, &v, 4);
            p += 4;
        }
    }
    return out;
}

std::vector<TraceRecord> decode_trace(const void* data, std::size_t len_bytes) {
    if (len_bytes % 16 != 0)
        throw LogError(LogProblem::bad_data,
                       "trace of " + std::to_string(len_bytes) + " bytes is not a whole number of 16-byte records");
    std::vector<TraceRecord> out(len_bytes / 16);
    const auto* p = static_cast<const unsigned char*>(data);
    auto next = [&p] {
        std::uint32_t v;
        std::memcpy(&v, p, 4);
        p += 4;
        return std::bit_cast<float>(to_little(v));
    };
    for (TraceRecord& r : out) {
        r.t_s = next();
        r.f0_hz = next();
        r.dev_cents = next();
        r.centre_dev_cents = next();
    }
    return out;
}

namespace {

bool same_double(double a, double b) { return (std::isnan(a) && std::isnan(b)) || a == b; }
bool same_float(float a, float b) { return (std::isnan(a) && std::isnan(b)) || a == b; }

}  // namespace

bool same_attempt(const Attempt& a, const Attempt& b) {
    if (a.uid != b.uid || a.started_at != b.started_at || a.drill != b.drill || a.kind != b.kind ||
        a.target != b.target || a.target_name != b.target_name || a.performer != b.performer ||
        a.settings_json != b.settings_json || a.locked != b.locked || a.trials != b.trials || a.method != b.method ||
        a.estimate != b.estimate || a.trace.size() != b.trace.size())
        return false;
    for (const auto& [x, y] : {std::pair{a.root_hz, b.root_hz},
                               {a.dur_s, b.dur_s},
                               {a.time_to_lock_s, b.time_to_lock_s},
                               {a.mean_dev_cents, b.mean_dev_cents},
                               {a.spread_cents, b.spread_cents},
                               {a.in_tolerance_share, b.in_tolerance_share},
                               {a.threshold_cents, b.threshold_cents},
                               {a.correct_share, b.correct_share},
                               {a.threshold_lo_cents, b.threshold_lo_cents},
                               {a.threshold_hi_cents, b.threshold_hi_cents}})
        if (!same_double(x, y)) return false;
    for (std::size_t i = 0; i < a.trace.size(); ++i) {
        const TraceRecord &p = a.trace[i], &q = b.trace[i];
        if (!same_float(p.t_s, q.t_s) || !same_float(p.f0_hz, q.f0_hz) || !same_float(p.dev_cents, q.dev_cents) ||
            !same_float(p.centre_dev_cents, q.centre_dev_cents))
            return false;
    }
    return true;
}

// ---- 2. Schema -------------------------------------------------------------

namespace {

// Version 1, as first released. Never edit: later changes are migrations.
constexpr const char* kSchemaV1 = R"sql(
CREATE TABLE attempt (
  id                 INTEGER PRIMARY KEY,
  started_at         TEXT NOT NULL,
  drill              TEXT NOT NULL,
  kind               TEXT NOT NULL CHECK (kind IN ('hold', 'ear')),
  target             TEXT NOT NULL,
  target_name        TEXT NOT NULL DEFAULT '',
  root_hz            REAL,
  settings           TEXT NOT NULL DEFAULT '{}',
  dur_s              REAL,
  locked             INTEGER CHECK (locked IN (0, 1)),
  time_to_lock_s     REAL,
  mean_dev_cents     REAL,
  spread_cents       REAL,
  in_tolerance_share REAL,
  threshold_cents    REAL,
  trials             INTEGER,
  correct_share      REAL
);
CREATE TABLE trace (
  attempt_id INTEGER PRIMARY KEY REFERENCES attempt (id) ON DELETE CASCADE,
  records    BLOB NOT NULL
);
CREATE INDEX attempt_by_target ON attempt (kind, target, started_at);
)sql";

// v1 -> v2: a stable id per attempt (imports skip what is already there),
// who practised, and an index for --since.
constexpr const char* kMigrateV1toV2 = R"sql(
ALTER TABLE attempt ADD COLUMN uid TEXT;
UPDATE attempt SET uid = lower(hex(randomblob(16))) WHERE uid IS NULL;
CREATE UNIQUE INDEX attempt_by_uid ON attempt (uid);
ALTER TABLE attempt ADD COLUMN performer TEXT NOT NULL DEFAULT '';
CREATE INDEX attempt_by_time ON attempt (started_at);
)sql";

// v2 -> v3: ear sessions say how they were measured (method), what the
// estimate is (measured, finer, none) and its interval. Old ear rows keep
// empty texts and NULL bounds: their threshold was a staircase's mean.
constexpr const char* kMigrateV2toV3 = R"sql(
ALTER TABLE attempt ADD COLUMN method TEXT NOT NULL DEFAULT '';
ALTER TABLE attempt ADD COLUMN estimate TEXT NOT NULL DEFAULT '';
ALTER TABLE attempt ADD COLUMN threshold_lo_cents REAL;
ALTER TABLE attempt ADD COLUMN threshold_hi_cents REAL;
)sql";

constexpr const char* kMigrations[] = {kSchemaV1, kMigrateV1toV2, kMigrateV2toV3};  // [k] takes version k to k + 1
static_assert(std::size(kMigrations) == PracticeLog::kSchemaVersion);

constexpr const char* kAttemptColumns =
    "attempt.id, uid, started_at, drill, kind, target, target_name, root_hz, performer, settings, dur_s, locked, "
    "time_to_lock_s, mean_dev_cents, spread_cents, in_tolerance_share, threshold_cents, trials, correct_share, method, "
    "estimate, threshold_lo_cents, threshold_hi_cents";

LogProblem problem_of(int code) {
    switch (code & 0xff) {
        case SQLITE_FULL: return LogProblem::full;
        case SQLITE_READONLY: return LogProblem::read_only;
        case SQLITE_CANTOPEN: return LogProblem::cannot_open;
        case SQLITE_PERM: return LogProblem::read_only;
        case SQLITE_BUSY:
        case SQLITE_LOCKED: return LogProblem::busy;
        case SQLITE_NOTADB:
        case SQLITE_CORRUPT: return LogProblem::not_a_log;
        case SQLITE_IOERR: return LogProblem::io;
        case SQLITE_CONSTRAINT:
        case SQLITE_MISMATCH: return LogProblem::bad_data;
        default: return LogProblem::other;
    }
}

std::string describe(LogProblem p) {
    switch (p) {
        case LogProblem::full: return "the disk is full";
        case LogProblem::read_only: return "the file is read-only";
        case LogProblem::cannot_open: return "cannot open the file";
        case LogProblem::busy: return "another program holds the file locked";
        case LogProblem::not_a_log: return "not a beatless practice log (or a damaged one)";
        case LogProblem::io: return "a disk read or write failed";
        case LogProblem::bad_data: return "a value was refused";
        default: return "unexpected database error";
    }
}

}  // namespace

// ---- 3. Opening, errors, statements ----------------------------------------

struct PracticeLog::Statements {
    sqlite3_stmt* insert_attempt = nullptr;
    sqlite3_stmt* insert_trace = nullptr;
    sqlite3_stmt* has_uid = nullptr;
    sqlite3_stmt* json_object = nullptr;
    ~Statements() {
        for (sqlite3_stmt* s : {insert_attempt, insert_trace, has_uid, json_object}) sqlite3_finalize(s);
    }
};

namespace {

// Resets a cached statement when it goes out of scope.
struct Reset {
    sqlite3_stmt* s;
    ~Reset() {
        sqlite3_reset(s);
        sqlite3_clear_bindings(s);
    }
};

}  // namespace

void PracticeLog::fail(const std::string& doing) const {
    const int code = db_ ? sqlite3_extended_errcode(db_) : SQLITE_CANTOPEN;
    const LogProblem p = problem_of(code);
    std::string msg = "practice log " + path_.string() + ": " + describe(p) + " (" + doing;
    if (db_) msg += std::string(": ") + sqlite3_errmsg(db_);
    msg += ")";
    throw LogError(p, msg);
}

void PracticeLog::check_log_file() {
    const std::string name = "practice log " + path_.string() + ": ";
    struct stat st {};
    if (::stat(path_.c_str(), &st) == 0) {
        // Never make a log of something else: a device (/dev/null would get a
        // -journal beside it), a folder, or a file that is not SQLite.
        if (S_ISDIR(st.st_mode)) throw LogError(LogProblem::cannot_open, name + "is a folder, not a file");
        if (!S_ISREG(st.st_mode))
            throw LogError(LogProblem::cannot_open, name + "is not a regular file (a device or pipe)");
        if (st.st_size == 0) return;
        // The 16-byte header every SQLite 3 database starts with (sqlite.org/fileformat.html, 1.3).
        static constexpr char kHeader[16] = {'S', 'Q', 'L', 'i', 't', 'e', ' ', 'f',
                                             'o', 'r', 'm', 'a', 't', ' ', '3', '\0'};
        char head[16] = {};
        std::ifstream in(path_, std::ios::binary);
        in.read(head, sizeof head);
        if (!in || std::memcmp(head, kHeader, sizeof head) != 0)
            throw LogError(LogProblem::not_a_log,
                           name + "is not a practice log (not an SQLite file); give a new file name");
        return;
    }
    if (errno != ENOENT && errno != ENOTDIR) throw LogError(LogProblem::cannot_open, name + std::strerror(errno));
    if (options_.read_only || !path_.has_parent_path()) return;
    // Only the default log's own folder is made; a folder the user named must exist.
    bool is_default = false;
    try {
        is_default = path_ == practice_log_path();
    } catch (const Error&) {}
    const fs::path dir = path_.parent_path();
    try {
        if (is_default) ensure_dir(dir);
    } catch (const Error& e) {
        throw LogError(LogProblem::cannot_open, name + e.what());
    }
    std::error_code ec;
    if (!fs::is_directory(dir, ec))
        throw LogError(LogProblem::cannot_open,
                       name + "the folder " + dir.string() +
                           (fs::exists(dir, ec) ? " is not a folder" : " does not exist (create it first)"));
}

void PracticeLog::exec(const char* sql, const std::string& doing) {
    if (sqlite3_exec(db_, sql, nullptr, nullptr, nullptr) != SQLITE_OK) fail(doing);
}

namespace {

std::int64_t query_int(sqlite3* db, const char* sql, bool& ok) {
    sqlite3_stmt* s = nullptr;
    ok = sqlite3_prepare_v2(db, sql, -1, &s, nullptr) == SQLITE_OK;
    std::int64_t v = 0;
    if (ok) {
        const int rc = sqlite3_step(s);
        if (rc == SQLITE_ROW)
            v = sqlite3_column_int64(s, 0);
        else
            ok = rc == SQLITE_DONE;
    }
    sqlite3_finalize(s);
    return v;
}

}  // namespace

PracticeLog::PracticeLog(fs::path path, LogOptions options) : path_(std::move(path)), options_(options) {
    check_log_file();
    const int flags = options_.read_only ? SQLITE_OPEN_READONLY : (SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE);
    if (sqlite3_open_v2(path_.c_str(), &db_, flags, nullptr) != SQLITE_OK) {
        try {
            fail("opening");
        } catch (...) {
            sqlite3_close(db_);
            db_ = nullptr;
            throw;
        }
    }
    try {
        sqlite3_extended_result_codes(db_, 1);
        sqlite3_busy_timeout(db_, options_.busy_timeout_ms);
        bool ok = false;
        const std::int64_t app = query_int(db_, "PRAGMA application_id", ok);
        if (!ok) fail("reading the header");
        const std::int64_t tables = query_int(db_, "SELECT count(*) FROM sqlite_schema", ok);
        if (!ok) fail("reading the schema");
        if (tables > 0 && app != kApplicationId)
            throw LogError(
                LogProblem::not_a_log,
                "practice log " + path_.string() + ": an SQLite file of another program, not a beatless practice log");
        // A file the process may not write (read-only mount, permissions)
        // opens read-only even when asked for read-write.
        if (sqlite3_db_readonly(db_, "main") == 1) options_.read_only = true;
        if (!options_.read_only) {
            exec("PRAGMA journal_mode = WAL", "switching to WAL");
            exec("PRAGMA synchronous = FULL", "setting synchronous");
        }
        exec("PRAGMA foreign_keys = ON", "setting foreign keys");
        migrate();
        if (options_.max_page_count > 0) set_max_page_count(options_.max_page_count);
        st_ = std::make_unique<Statements>();
        const std::string ins =
            "INSERT INTO attempt (uid, started_at, drill, kind, target, target_name, root_hz, performer, "
            "settings, dur_s, locked, time_to_lock_s, mean_dev_cents, spread_cents, in_tolerance_share, "
            "threshold_cents, trials, correct_share, method, estimate, threshold_lo_cents, threshold_hi_cents) "
            "VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)";
        const std::pair<sqlite3_stmt**, const char*> stmts[] = {
            {&st_->insert_attempt, ins.c_str()},
            {&st_->insert_trace, "INSERT INTO trace (attempt_id, records) VALUES (?, ?)"},
            {&st_->has_uid, "SELECT 1 FROM attempt WHERE uid = ?"},
            {&st_->json_object, "SELECT json_valid(?1) AND json_type(?1) = 'object'"},
        };
        for (const auto& [slot, sql] : stmts)
            if (sqlite3_prepare_v3(db_, sql, -1, SQLITE_PREPARE_PERSISTENT, slot, nullptr) != SQLITE_OK)
                fail("preparing");
    } catch (...) {
        st_.reset();
        sqlite3_close(db_);
        db_ = nullptr;
        throw;
    }
}

PracticeLog::~PracticeLog() {
    st_.reset();
    if (db_) sqlite3_close(db_);
}

int PracticeLog::user_version() const {
    bool ok = false;
    const auto v = static_cast<int>(query_int(db_, "PRAGMA user_version", ok));
    if (!ok) fail("reading the schema version");
    return v;
}

void PracticeLog::migrate() {
    const int v = user_version();
    if (v > kSchemaVersion)
        throw LogError(LogProblem::too_new, "practice log " + path_.string() +
                                                ": written by a newer beatless (schema " + std::to_string(v) +
                                                "; this one knows up to " + std::to_string(kSchemaVersion) + ")");
    if (v == kSchemaVersion) return;
    if (options_.read_only)
        throw LogError(LogProblem::read_only, "practice log " + path_.string() + ": schema " + std::to_string(v) +
                                                  " needs upgrading, which a read-only open cannot do");
    exec("BEGIN IMMEDIATE", "starting the upgrade");
    try {
        for (int k = v; k < kSchemaVersion; ++k) exec(kMigrations[k], "upgrading to schema " + std::to_string(k + 1));
        const std::string set = "PRAGMA application_id = " + std::to_string(kApplicationId) +
                                "; PRAGMA user_version = " + std::to_string(kSchemaVersion);
        exec(set.c_str(), "recording the schema version");
        exec("COMMIT", "committing the upgrade");
    } catch (...) {
        sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
        throw;
    }
}

void PracticeLog::set_max_page_count(std::int64_t pages) {
    const std::int64_t n = pages > 0 ? pages : 4294967294LL;
    const std::string sql = "PRAGMA max_page_count = " + std::to_string(n);
    exec(sql.c_str(), "limiting the size");
    options_.max_page_count = pages;
}

bool PracticeLog::is_json_object(const std::string& text) const {
    sqlite3_stmt* s = st_->json_object;
    Reset r{s};
    sqlite3_bind_text(s, 1, text.data(), static_cast<int>(text.size()), SQLITE_STATIC);
    return sqlite3_step(s) == SQLITE_ROW && sqlite3_column_int(s, 0) == 1;
}

// ---- 4. Writing attempts ---------------------------------------------------

namespace {

void bind_text(sqlite3_stmt* s, int i, const std::string& v) {
    sqlite3_bind_text(s, i, v.data(), static_cast<int>(v.size()), SQLITE_STATIC);
}

void bind_real(sqlite3_stmt* s, int i, double v) {
    if (std::isfinite(v))
        sqlite3_bind_double(s, i, v);
    else
        sqlite3_bind_null(s, i);
}

}  // namespace

void PracticeLog::insert(Attempt& a) {
    if (a.uid.empty()) a.uid = new_uid();
    if (a.started_at.empty()) a.started_at = utc_now_iso8601();
    auto refuse = [&](const std::string& why) {
        throw LogError(LogProblem::bad_data,
                       "practice log " + path_.string() + ": attempt " + a.uid + " refused: " + why);
    };
    if (!is_uid(a.uid)) refuse("uid '" + a.uid + "' is not 32 lowercase hex digits");
    if (!is_utc_iso8601(a.started_at))
        refuse("start time '" + a.started_at + "' is not UTC ISO 8601 (YYYY-MM-DDTHH:MM:SS.mmmZ)");
    if (a.drill.empty()) refuse("no drill id");
    if (a.target.empty()) refuse("no target");
    if (!is_json_object(a.settings_json)) refuse("settings are not a JSON object");

    sqlite3_stmt* s = st_->insert_attempt;
    {
        Reset r{s};
        bind_text(s, 1, a.uid);
        bind_text(s, 2, a.started_at);
        bind_text(s, 3, a.drill);
        const std::string kind(kind_name(a.kind));
        bind_text(s, 4, kind);
        bind_text(s, 5, a.target);
        bind_text(s, 6, a.target_name);
        bind_real(s, 7, a.root_hz);
        bind_text(s, 8, a.performer);
        bind_text(s, 9, a.settings_json);
        bind_real(s, 10, a.dur_s);
        if (a.locked) sqlite3_bind_int(s, 11, *a.locked ? 1 : 0);
        bind_real(s, 12, a.time_to_lock_s);
        bind_real(s, 13, a.mean_dev_cents);
        bind_real(s, 14, a.spread_cents);
        bind_real(s, 15, a.in_tolerance_share);
        bind_real(s, 16, a.threshold_cents);
        if (a.trials) sqlite3_bind_int(s, 17, *a.trials);
        bind_real(s, 18, a.correct_share);
        bind_text(s, 19, a.method);
        bind_text(s, 20, a.estimate);
        bind_real(s, 21, a.threshold_lo_cents);
        bind_real(s, 22, a.threshold_hi_cents);
        if (sqlite3_step(s) != SQLITE_DONE) fail("writing attempt " + a.uid);
    }
    const sqlite3_int64 id = sqlite3_last_insert_rowid(db_);
    const std::string blob = encode_trace(a.trace);
    s = st_->insert_trace;
    Reset r{s};
    sqlite3_bind_int64(s, 1, id);
    sqlite3_bind_blob(s, 2, blob.data(), static_cast<int>(blob.size()), SQLITE_STATIC);
    if (sqlite3_step(s) != SQLITE_DONE) fail("writing the trace of attempt " + a.uid);
}

void PracticeLog::add(Attempt& attempt) {
    exec("BEGIN IMMEDIATE", "starting a write");
    try {
        insert(attempt);
        exec("COMMIT", "committing attempt " + attempt.uid);
    } catch (...) {
        sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
        throw;
    }
}

bool PracticeLog::has_uid(const std::string& uid) const {
    sqlite3_stmt* s = st_->has_uid;
    Reset r{s};
    bind_text(s, 1, uid);
    const int rc = sqlite3_step(s);
    if (rc != SQLITE_ROW && rc != SQLITE_DONE) fail("looking up attempt " + uid);
    return rc == SQLITE_ROW;
}

std::size_t PracticeLog::add_all(std::vector<Attempt>& attempts) {
    std::size_t added = 0;
    exec("BEGIN IMMEDIATE", "starting a write");
    try {
        for (Attempt& a : attempts) {
            if (!a.uid.empty() && has_uid(a.uid)) continue;
            insert(a);
            ++added;
        }
        exec("COMMIT", "committing " + std::to_string(added) + " attempts");
    } catch (...) {
        sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
        throw;
    }
    return added;
}

// ---- 5. Reading attempts and history sums ----------------------------------

namespace {

// WHERE clause for a filter; parameters ?1 target, ?2 since, ?3 drill (empty
// = any), ?4 1 to keep the simulated performers' attempts, ?5 and ?6 their names, ?7 voices (0 = any).
// An attempt's voices from its settings (1 when absent). json_extract only where the text names "voices":
// most attempts do not, and parsing every row's JSON would slow `history` over a large log.
constexpr const char* kVoices =
    "(CASE WHEN instr(attempt.settings, '\"voices\"') > 0 AND json_valid(attempt.settings) THEN "
    "coalesce(json_extract(attempt.settings, '$.voices'), 1) ELSE 1 END)";

const std::string kWhere =
    std::string(
        " WHERE (?1 = '' OR attempt.target = ?1 OR (attempt.kind = 'ear' AND instr(' ' || attempt.target || "
        "' ', ' ' || ?1 || ' ') > 0))"
        " AND (?2 = '' OR attempt.started_at >= ?2) AND (?3 = '' OR attempt.drill = ?3)"
        " AND (?4 = 1 OR attempt.performer NOT IN (?5, ?6))"
        " AND (?7 = 0 OR ?7 = ") +
    kVoices + ")";

struct Stmt {
    sqlite3_stmt* s = nullptr;
    ~Stmt() { sqlite3_finalize(s); }
};

std::string column_text(sqlite3_stmt* s, int i) {
    const auto* p = reinterpret_cast<const char*>(sqlite3_column_text(s, i));
    return p ? std::string(p, static_cast<std::size_t>(sqlite3_column_bytes(s, i))) : std::string();
}

double column_real(sqlite3_stmt* s, int i) {
    return sqlite3_column_type(s, i) == SQLITE_NULL ? NAN : sqlite3_column_double(s, i);
}

void bind_filter(sqlite3_stmt* s, const AttemptFilter& f) {
    bind_text(s, 1, f.target);
    bind_text(s, 2, f.since);
    bind_text(s, 3, f.drill);
    sqlite3_bind_int(s, 4, f.simulated ? 1 : 0);
    sqlite3_bind_text(s, 5, kDemoPerformer, -1, SQLITE_STATIC);  // string literals: they outlive the statement
    sqlite3_bind_text(s, 6, kSimulatedListener, -1, SQLITE_STATIC);
    sqlite3_bind_int(s, 7, f.voices);
}

}  // namespace

void PracticeLog::for_each(const AttemptFilter& filter, bool with_trace,
                           const std::function<void(const Attempt&)>& fn) const {
    std::string sql = std::string("SELECT ") + kAttemptColumns + (with_trace ? ", trace.records" : "") +
                      " FROM attempt" + (with_trace ? " LEFT JOIN trace ON trace.attempt_id = attempt.id" : "") +
                      kWhere + " ORDER BY attempt.started_at, attempt.uid";
    Stmt st;
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &st.s, nullptr) != SQLITE_OK) fail("preparing a read");
    bind_filter(st.s, filter);
    Attempt a;
    int rc;
    while ((rc = sqlite3_step(st.s)) == SQLITE_ROW) {
        sqlite3_stmt* s = st.s;
        a.uid = column_text(s, 1);
        a.started_at = column_text(s, 2);
        a.drill = column_text(s, 3);
        const auto kind = parse_kind(column_text(s, 4));
        if (!kind)
            throw LogError(LogProblem::bad_data,
                           "practice log " + path_.string() + ": attempt " + a.uid + " has an unknown kind");
        a.kind = *kind;
        a.target = column_text(s, 5);
        a.target_name = column_text(s, 6);
        a.root_hz = column_real(s, 7);
        a.performer = column_text(s, 8);
        a.settings_json = column_text(s, 9);
        a.dur_s = column_real(s, 10);
        a.locked = sqlite3_column_type(s, 11) == SQLITE_NULL ? std::optional<bool>() : sqlite3_column_int(s, 11) != 0;
        a.time_to_lock_s = column_real(s, 12);
        a.mean_dev_cents = column_real(s, 13);
        a.spread_cents = column_real(s, 14);
        a.in_tolerance_share = column_real(s, 15);
        a.threshold_cents = column_real(s, 16);
        a.trials = sqlite3_column_type(s, 17) == SQLITE_NULL ? std::optional<int>() : sqlite3_column_int(s, 17);
        a.correct_share = column_real(s, 18);
        a.method = column_text(s, 19);
        a.estimate = column_text(s, 20);
        a.threshold_lo_cents = column_real(s, 21);
        a.threshold_hi_cents = column_real(s, 22);
        a.trace.clear();
        if (with_trace && sqlite3_column_type(s, 23) != SQLITE_NULL) {
            const void* blob = sqlite3_column_blob(s, 23);
            const auto len = static_cast<std::size_t>(sqlite3_column_bytes(s, 23));
            try {
                a.trace = decode_trace(blob, len);
            } catch (const LogError& e) {
                throw LogError(LogProblem::bad_data,
                               "practice log " + path_.string() + ": attempt " + a.uid + ": " + e.what());
            }
        }
        fn(a);
    }
    if (rc != SQLITE_DONE) fail("reading attempts");
}

std::vector<Attempt> PracticeLog::read(const AttemptFilter& filter, bool with_trace) const {
    std::vector<Attempt> out;
    for_each(filter, with_trace, [&](const Attempt& a) { out.push_back(a); });
    return out;
}

std::int64_t PracticeLog::count() const {
    bool ok = false;
    const std::int64_t n = query_int(db_, "SELECT count(*) FROM attempt", ok);
    if (!ok) fail("counting attempts");
    return n;
}

std::int64_t PracticeLog::count(const AttemptFilter& filter) const {
    const std::string sql = std::string("SELECT count(*) FROM attempt") + kWhere;
    Stmt st;
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &st.s, nullptr) != SQLITE_OK) fail("preparing the count query");
    bind_filter(st.s, filter);
    if (sqlite3_step(st.s) != SQLITE_ROW) fail("counting attempts");
    return sqlite3_column_int64(st.s, 0);
}

std::vector<HistoryGroup> PracticeLog::history_groups(const AttemptFilter& filter) const {
    // One plain scan, summed in a hash map: several times faster than
    // SQLite's GROUP BY, which sorts every row through a temporary b-tree.
    const std::string sql = std::string(
                                "SELECT kind, target, drill, target_name, started_at, locked, time_to_lock_s, "
                                "mean_dev_cents, spread_cents, in_tolerance_share, threshold_cents, ") +
                            kVoices + " FROM attempt" + kWhere;
    Stmt st;
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &st.s, nullptr) != SQLITE_OK) fail("preparing the history query");
    bind_filter(st.s, filter);
    std::vector<HistoryGroup> out;
    std::unordered_map<std::string, std::size_t> index;
    std::string key;
    auto text = [](sqlite3_stmt* s, int i) {
        const auto* p = reinterpret_cast<const char*>(sqlite3_column_text(s, i));
        return p ? std::string_view(p, static_cast<std::size_t>(sqlite3_column_bytes(s, i))) : std::string_view();
    };
    auto add = [](sqlite3_stmt* s, int i, double& sum, std::int64_t& n) {
        if (sqlite3_column_type(s, i) == SQLITE_NULL) return;
        sum += sqlite3_column_double(s, i);
        ++n;
    };
    int rc;
    while ((rc = sqlite3_step(st.s)) == SQLITE_ROW) {
        sqlite3_stmt* s = st.s;
        const bool is_hold = text(s, 0) == "hold";
        const std::string_view k = is_hold ? text(s, 1) : text(s, 2);
        const std::string_view day = text(s, 4).substr(0, 10);
        const int voices = is_hold ? std::clamp(sqlite3_column_int(s, 11), 1, 2) : 1;
        key.assign(is_hold ? (voices == 2 ? "d" : "h") : "e");
        key.append(k);
        key += '\n';
        key.append(day);
        auto [it, fresh] = index.try_emplace(key, out.size());
        if (fresh) {
            HistoryGroup g;
            g.kind = is_hold ? AttemptKind::hold : AttemptKind::ear;
            g.key = k;
            g.name = is_hold ? text(s, 3) : text(s, 1);
            g.day = day;
            g.voices = voices;
            out.push_back(std::move(g));
        }
        HistoryGroup& g = out[it->second];
        ++g.attempts;
        if (sqlite3_column_type(s, 5) != SQLITE_NULL) {
            g.locked += sqlite3_column_int(s, 5) != 0;
            ++g.locked_n;
        }
        add(s, 6, g.time_to_lock_sum, g.time_to_lock_n);
        add(s, 7, g.mean_dev_sum, g.mean_dev_n);
        add(s, 8, g.spread_sum, g.spread_n);
        add(s, 9, g.in_tol_sum, g.in_tol_n);
        add(s, 10, g.threshold_sum, g.threshold_n);
    }
    if (rc != SQLITE_DONE) fail("reading the history");
    std::sort(out.begin(), out.end(), [](const HistoryGroup& a, const HistoryGroup& b) {
        return std::tie(a.kind, a.key, a.voices, a.day) < std::tie(b.kind, b.key, b.voices, b.day);
    });
    return out;
}

}  // namespace beatless::ui
