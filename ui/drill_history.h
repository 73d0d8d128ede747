// Drill history — one drill's attempts from the practice log, per target and
// per day, and the Drills screen's panel of small plots of them.
//
// Read with the queries `beatless history` uses (ui/history.h:
// summarize_history by day, filtered by the drill's id): for a hold drill
// one series per target, in the drill's order, of the day's mean signed
// deviation (the mean of that day's attempts' means); for an ear drill one
// series of the day's mean threshold. The panel draws each series as a small
// plot over at most the last 30 days (a dot per day that has attempts, the
// tolerance band and the target line for holds), its label and its latest
// value; the targets that do not fit are counted, pointing to `beatless history`.
#pragma once

#include "ui/drill_files.h"

#include <imgui.h>

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

namespace beatless::ui {

struct DrillHistorySeries {
    std::string key;                              // "7/5", or the drill id (ear)
    std::string name;
    std::vector<std::pair<long, double>> points;  // day number (days since 1970-01-01, UTC), value
    std::int64_t attempts = 0;
};

struct DrillHistory {
    std::vector<DrillHistorySeries> series;
    std::string note;                             // why there is nothing to plot, or empty
};

// Reads the drill's history from the log at log_path (read-only; empty path:
// no log in use). Never throws: a problem becomes the note.
// Attempts by the demo performer and the simulated listener count only when
// `simulated` is true (the screen runs with one of them).
DrillHistory read_drill_history(const std::string& log_path, const Drill& drill, bool simulated);

// "YYYY-MM-DD" to days since 1970-01-01 (0 for a malformed day).
long day_number(const std::string& day);

// Draws the history panel with its top-left at (x0, y0).
void draw_drill_history(ImDrawList* dl, const DrillHistory& h, const Drill& drill, float x0, float y0, float w, float hgt);

}  // namespace beatless::ui
