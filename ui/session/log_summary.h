// Log summary — the practice log summarised per target and over time, as text for people and JSON or CSV for programs.
// Method: from the per-day sums of PracticeLog::history_groups, per day, week (from Monday, ISO 8601) or month, in
// UTC; every attempt weighs the same (the figures beside HistoryLine). Ear drills are refitted from every logged
// answer (fit_ear_periods, ui/session/threshold_fit.h); ear rows from before schema 3 measured nothing.
// Thread: the caller's. Allocates: yes.
#pragma once

#include "ui/session/practice_log.h"
#include "ui/session/threshold_fit.h"

#include <string>
#include <vector>

namespace beatless::ui {

enum class Period { day, week, month };

struct HistoryOptions {
    AttemptFilter filter;
    Period by = Period::week;  // the over-time buckets; default week
};

struct HistoryLine {
    AttemptKind kind = AttemptKind::hold;
    std::string period;  // "all", or the bucket's first day "2025-03-03" ("2025-03" for months)
    std::string key;     // hold: target "7/5"; ear: drill id
    std::string name;    // target name (hold) or the choices (ear)
    int voices = 1;      // hold: 2 for the interval between two voices (a double stop), kept apart from one voice
    std::int64_t attempts = 0;
    double locked_share = NAN;        // 0..1
    double time_to_lock_s = NAN;      // mean over attempts that locked
    double mean_dev_cents = NAN;      // mean of the attempts' mean deviations
    double spread_cents = NAN;        // mean of the attempts' spreads
    double in_tolerance_share = NAN;  // mean share within tolerance
    double threshold_cents = NAN;     // discriminate: the threshold fitted to the period's answers (measured)
    double threshold_lo_cents = NAN;  // discriminate: its interval (lo 0: not bounded below)
    double threshold_hi_cents = NAN;
    std::string estimate;        // discriminate: "measured", "finer" (than threshold_hi_cents), "none"; else empty
    double correct_share = NAN;  // ear: share of the period's answers that were right
};

// One ear drill's logged answers, per period ("all" first, then in time order).
struct EarPeriodFit {
    std::string period;
    bool discriminate = false;
    ui::ThresholdEstimate estimate;  // discriminate only
    std::int64_t right = 0, answers = 0;
};
std::vector<EarPeriodFit> fit_ear_periods(const PracticeLog& log, const AttemptFilter& filter, Period by);

struct HistorySummary {
    std::string log_path;
    std::string since;  // as given (normalised), or empty
    Period by = Period::week;
    std::int64_t attempts = 0;            // matching the filter
    std::int64_t simulated_left_out = 0;  // the filter leaves out simulated performers: how many of theirs it left
    std::vector<HistoryLine> totals;      // period "all": holds by pitch, then ear drills
    std::vector<HistoryLine> over_time;   // per key, in time order
};

HistorySummary summarize_history(const PracticeLog& log, const HistoryOptions& options);

std::string render_history_text(const HistorySummary& s);
std::string render_history_json(const HistorySummary& s);
std::string render_history_csv(const HistorySummary& s);

std::string_view period_name(Period p);  // "day", "week", "month"

// The first day of the bucket holding a UTC day "YYYY-MM-DD".
std::string period_start(const std::string& day, Period p);

}  // namespace beatless::ui
