// Drill progress — one drill's attempts from the practice log, per target and per day.
//
// Read with the queries `beatless history` uses (ui/session/log_summary.h,
// by day, filtered by the drill's id): for a hold drill one series per
// target in the drill's order (the day's mean signed deviation); for an ear
// drill one series of the day's mean threshold. Drawn by ui/screens/drill_chart.h.
#pragma once

#include "ui/session/drill_files.h"

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

namespace beatless::ui {

struct DrillProgressSeries {
    std::string key;                              // "7/5", or the drill id (ear)
    std::string name;
    std::vector<std::pair<long, double>> points;  // day number (days since 1970-01-01, UTC), value
    std::int64_t attempts = 0;
};

struct DrillProgress {
    std::vector<DrillProgressSeries> series;
    std::string note;                             // why there is nothing to plot, or empty
};

// Reads the drill's history from the log at log_path (read-only; empty path:
// no log in use). Never throws: a problem becomes the note.
// Attempts by the demo performer and the simulated listener count only when
// `simulated` is true (the screen runs with one of them).
DrillProgress read_drill_progress(const std::string& log_path, const Drill& drill, bool simulated);

// "YYYY-MM-DD" to days since 1970-01-01 (0 for a malformed day).
long day_number(const std::string& day);

// Draws the history panel with its top-left at (x0, y0).

}  // namespace beatless::ui
