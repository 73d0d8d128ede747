// Drill progress — one drill's attempts from the practice log, per target and per day.
//
// With the queries `beatless history --by day` uses (ui/session/log_summary.h,
// filtered by the drill's id). Hold drills: one series per target in the
// drill's order (the day's mean signed deviation). Discrimination drills:
// one series, the threshold fitted to all of the day's answers with its
// interval, or "finer than" the smallest level played. Identification
// drills: the day's share right. Drawn by ui/screens/drill_chart.h.
#pragma once

#include "ui/session/drill_files.h"

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

namespace beatless::ui {

struct ProgressPoint {
    long day = 0;        // days since 1970-01-01, UTC
    double value = NAN;  // hold: mean deviation, cents; discriminate: threshold, cents; identify: share right 0..1
    double lo = NAN;     // discriminate: the interval (lo may be 0: not bounded below)
    double hi = NAN;
    bool finer = false;  // discriminate: finer than value (the smallest level played)
};

struct DrillProgressSeries {
    std::string key;  // "7/5", or the drill id (ear)
    std::string name;
    std::vector<ProgressPoint> points;  // in day order
    std::int64_t attempts = 0;
    std::int64_t no_threshold_days = 0;  // discriminate: days whose answers gave no reliable threshold
};

struct DrillProgress {
    std::vector<DrillProgressSeries> series;
    std::string note;  // why there is nothing to plot, or empty
    int voices = 1;    // hold drills: the attempts read (2: the interval of two voices), kept apart as `history` does
};

// Reads the drill's history from the log at log_path (read-only; empty path:
// no log in use). Never throws: a problem becomes the note.
// Attempts by the demo performer and the simulated listener count only when
// `simulated` is true (the screen runs with one of them). A hold drill's
// series are its one-voice attempts, or with voices 2 its two-voice ones.
DrillProgress read_drill_progress(const std::string& log_path, const Drill& drill, bool simulated, int voices = 1);

// "YYYY-MM-DD" to days since 1970-01-01 (0 for a malformed day).
long day_number(const std::string& day);

// Draws the history panel with its top-left at (x0, y0).

}  // namespace beatless::ui
