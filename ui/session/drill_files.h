// Drill files — scored exercises as TOML files in targets/ (kind = "drill"): hold drills and ear drills.
// Keys are ours and listed in DEVELOPERS.md, "Methods in detail" (a key this loader does not know is an error);
// errors name the file, line and key: "my-drill.toml:7: `hold_s`: 0 is out of range (0.5 to 120)".
// Thread: any. Allocates: yes.
#pragma once

#include "pitch/theory/targets.h"
#include "ui/session/drill_score.h"
#include "ui/session/ear_question.h"
#include "ui/session/staircase.h"
#include "ui/session/threshold_fit.h"

#include <cmath>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

enum class DrillMode { hold, ear };
enum class TargetOrder { sequence, shuffle };

struct DroneSettings {
    std::string root_text = "A2";  // as written in the file
    double root_hz = 110.0;        // A2 at A4 = 440 Hz
    double level_dbfs = -24.0;     // drone level; -60 .. -6, default -24
    int partials = 6;              // harmonics in the drone (1 = a sine); default 6
    bool fifth = false;            // add the fifth above the root; default false
};

struct DrillTarget {
    pitch::Target target;
    double hold_s = NAN;  // this target's hold; NaN: the drill's hold_s
};

struct Drill {
    std::string id;  // file stem: "hold-tritones"
    std::string title;
    std::string about;
    DrillMode mode = DrillMode::hold;
    DroneSettings drone;
    std::vector<DrillTarget> targets;
    int repetitions = 1;  // rounds through the targets; default 1
    TargetOrder order = TargetOrder::sequence;
    // Hold drills
    double hold_s = 4.0;            // default 4
    double lead_in_s = 2.0;         // drone alone before each hold; default 2
    double rest_s = 1.0;            // silence between holds; default 1
    double tolerance_cents = 10.0;  // default 10
    double dwell_s = 0.3;           // default 0.3
    bool sound_target = false;      // play the target tone before the hold; default false
    // Ear drills
    ui::EarTask task = ui::EarTask::discriminate;
    double tone_s = 2.0;            // each tone's length; default 2
    ui::StaircaseConfig staircase;  // discriminate
    int rounds = 8;                 // identify: times each interval is asked; default 8

    // Hold: the targets in performing order, repetitions rounds, each round
    // shuffled with the seed when order = "shuffle".
    std::vector<DrillTarget> sequence(std::uint64_t seed) const;
    double hold_of(const DrillTarget& t) const { return std::isnan(t.hold_s) ? hold_s : t.hold_s; }
    // Score settings for one hold that starts at hold_start_s.
    ui::HoldScoreConfig score_config(const DrillTarget& t, double hold_start_s, double hop_s) const;
    std::vector<double> target_cents() const;
    std::string targets_text() const;  // "11/8 7/5 45/32 600c 10/7"
    // discriminate: the fit for this drill's answers (its rule's point, its levels' range).
    ui::FitConfig fit_config() const;
};

// Loads a built-in drill by name ("hold-tritones") or a file by path.
Drill load_drill(std::string_view name_or_path);
Drill parse_drill(std::string_view text, std::string_view source_name);

// The drill's settings as a JSON object, for the practice log. voices 2: a hold drill scored on the interval
// between two voices in one input (a double stop); the object then says "voices": 2 (absent: one voice).
std::string drill_settings_json(const Drill& drill, int voices = 1);

}  // namespace beatless::ui
