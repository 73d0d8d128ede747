// Practice log — every drill attempt in one SQLite file, one transaction per attempt (attempt row and trace together),
// WAL with synchronous=FULL: a kill loses at most the attempt being written (https://sqlite.org/atomiccommit.html).
// Schema versions and the trace format: DEVELOPERS.md, "Methods in detail".
// Thread: one thread per PracticeLog. Errors throw LogError (an Error) naming the file and the problem.
#pragma once

#include "pitch/base/error.h"
#include "ui/session/usage_error.h"

#include <cmath>
#include <cstdint>
#include <filesystem>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

struct sqlite3;
struct sqlite3_stmt;

namespace beatless::ui {

enum class AttemptKind { hold, ear };
std::string_view kind_name(AttemptKind kind);                  // "hold", "ear"
std::optional<AttemptKind> parse_kind(std::string_view text);  // empty when unknown

// One record of an attempt's trace (16 bytes on disk, little-endian float32).
struct TraceRecord {
    float t_s = 0.0f;    // hold: time from the hold's start; ear: time of the answer
    float f0_hz = 0.0f;  // hold: f0 (0 when unvoiced; two voices: the upper voice's, 0 when no pair);
                         //   discriminate: the mistuning asked and played,
                         //   cents; identify: the interval played (index); schema 2 ear: staircase level
    float dev_cents =
        NAN;  // hold: deviation from the target (two voices: the interval's); discriminate: signed mistuning played
              //   (+ wider); identify: the interval named (index); schema 2 ear: separation
    float centre_dev_cents = NAN;  // hold: vibrato centre's deviation; ear: 1 right, 0 wrong
};

struct Attempt {
    std::string uid;         // 32 lowercase hex digits; add() makes one when empty
    std::string started_at;  // UTC ISO 8601 "2025-03-01T14:03:22.123Z"; add() uses now when empty
    std::string drill;       // drill id, e.g. "hold-tritones"
    AttemptKind kind = AttemptKind::hold;
    std::string target;                // hold: "7/5"; ear: the choices "11/8 7/5 45/32 600c 10/7"
    std::string target_name;           // "septimal tritone", or empty
    double root_hz = NAN;              // the drone's root
    std::string performer;             // who practised, or empty
    std::string settings_json = "{}";  // the drill's settings, a JSON object
    double dur_s = NAN;                // length of the hold or the ear session
    std::optional<bool> locked;        // hold: reached a lock
    double time_to_lock_s = NAN;       // hold scores (ui/session/drill_score.h); NaN when not known
    double mean_dev_cents = NAN;
    double spread_cents = NAN;
    double in_tolerance_share = NAN;
    double threshold_cents = NAN;     // ear: fitted threshold (estimate "measured"; schema 2: staircase mean)
    std::optional<int> trials;        // ear: questions answered
    double correct_share = NAN;       // ear: share answered right
    std::string method;               // ear: "discriminate 2-down 1-up", "identify"; empty before schema 3
    std::string estimate;             // discriminate: "measured", "finer", "none"; else empty
    double threshold_lo_cents = NAN;  // discriminate: the 95 % interval (finer: 0 to the smallest level played)
    double threshold_hi_cents = NAN;
    std::vector<TraceRecord> trace;
};

// Field-by-field equality where NaN equals NaN (for tests and round trips).
bool same_attempt(const Attempt& a, const Attempt& b);

// What went wrong, so a writer can decide to keep the attempt and retry.
enum class LogProblem { full, read_only, cannot_open, busy, not_a_log, too_new, io, bad_data, other };

class LogError : public Error {
public:
    LogError(LogProblem problem, const std::string& message) : Error(message), problem_(problem) {}
    LogProblem problem() const { return problem_; }

private:
    LogProblem problem_;
};

struct LogOptions {
    bool read_only = false;           // open without writing; default false
    std::int64_t max_page_count = 0;  // > 0 caps the file at this many pages (tests use it as a full disk); default 0
    int busy_timeout_ms = 2000;       // wait this long for another writer; default 2000
};

// Attempt.performer of the program's own stand-ins: their attempts are kept
// (a demo can show a history) but kept apart from the performer's own.
inline constexpr const char* kDemoPerformer = "demo performer";
inline constexpr const char* kSimulatedListener = "simulated listener";

struct AttemptFilter {
    std::string target;     // a target such as "7/5"; ear attempts match when it is among their choices
    std::string since;      // UTC ISO 8601 prefix ("2025-03-01"): attempts started at or after it
    std::string drill;      // a drill id
    bool simulated = true;  // false: leave out the demo performer's and the simulated listener's attempts
    int voices = 0;  // 1 or 2: only attempts that scored that many voices (settings "voices", 1 when absent); 0: any
};

// Sums for one (kind, key, day) group: the raw material of `beatless history`.
struct HistoryGroup {
    AttemptKind kind = AttemptKind::hold;
    std::string key;   // hold: the target; ear: the drill id
    std::string name;  // target name (hold) or the target list (ear)
    std::string day;   // "2025-03-01" (UTC)
    int voices = 1;    // hold: 2 when the interval between two voices was scored (a double stop); ear: 1
    std::int64_t attempts = 0;
    std::int64_t locked = 0, locked_n = 0;
    double time_to_lock_sum = 0, mean_dev_sum = 0, spread_sum = 0, in_tol_sum = 0, threshold_sum = 0;
    std::int64_t time_to_lock_n = 0, mean_dev_n = 0, spread_n = 0, in_tol_n = 0, threshold_n = 0;
};

class PracticeLog {
public:
    static constexpr int kSchemaVersion = 3;
    static constexpr std::int32_t kApplicationId = 0x42544c47;  // "BTLG"

    // Opens or creates the log (and its folder), migrating an older schema.
    // Throws LogError naming the file and the problem.
    explicit PracticeLog(std::filesystem::path path, LogOptions options = {});
    ~PracticeLog();
    PracticeLog(const PracticeLog&) = delete;
    PracticeLog& operator=(const PracticeLog&) = delete;

    const std::filesystem::path& path() const { return path_; }
    int user_version() const;

    // Writes one attempt in one transaction; fills uid and started_at when
    // empty. Throws LogError and leaves the file as it was on failure.
    void add(Attempt& attempt);

    // Writes many attempts in one transaction: all or none. Attempts whose
    // uid is already in the log are skipped. Returns how many were added.
    std::size_t add_all(std::vector<Attempt>& attempts);

    std::int64_t count() const;
    std::int64_t count(const AttemptFilter& filter) const;  // attempts matching the filter
    bool has_uid(const std::string& uid) const;

    // Attempts in start-time order (then uid), with or without their traces.
    void for_each(const AttemptFilter& filter, bool with_trace, const std::function<void(const Attempt&)>& fn) const;
    std::vector<Attempt> read(const AttemptFilter& filter = {}, bool with_trace = true) const;

    // Per (kind, key, voices, day) sums for the history summary.
    std::vector<HistoryGroup> history_groups(const AttemptFilter& filter) const;

    // Caps the file at this many pages (<= 0: no cap). Tests use it as a full disk.
    void set_max_page_count(std::int64_t pages);
    bool read_only() const { return options_.read_only; }

    // True when the text is a JSON object (SQLite's JSON1 json_valid).
    bool is_json_object(const std::string& text) const;

private:
    struct Statements;
    void migrate();
    void insert(Attempt& a);
    [[noreturn]] void fail(const std::string& doing) const;
    void check_log_file();  // refuses a non-log file, a device and a missing folder before SQLite opens it
    void exec(const char* sql, const std::string& doing);

    std::filesystem::path path_;
    LogOptions options_;
    sqlite3* db_ = nullptr;
    std::unique_ptr<Statements> st_;
};

// Time helpers (UTC, ISO 8601 with milliseconds and a Z).
std::string utc_now_iso8601();
bool is_utc_iso8601(std::string_view text);  // exactly "YYYY-MM-DDTHH:MM:SS.mmmZ", a real date
// A --since value: "YYYY-MM-DD", "YYYY-MM-DDTHH:MM", "YYYY-MM-DDTHH:MM:SS", each
// optionally with a trailing Z. Returns the prefix to compare with; throws
// UsageError naming the text otherwise.
std::string parse_since(std::string_view text);
std::string new_uid();  // 32 random lowercase hex digits
bool is_uid(std::string_view text);

// The trace BLOB format, exposed for the CSV export and tests.
std::string encode_trace(const std::vector<TraceRecord>& trace);
// Throws LogError(bad_data) when the size is not a multiple of 16 bytes.
std::vector<TraceRecord> decode_trace(const void* data, std::size_t len_bytes);

}  // namespace beatless::ui
