// Staircase — a transformed up-down staircase for discrimination thresholds (2-down/1-up tracks 70.7 %).
// Method: H. Levitt, "Transformed up-down methods in psychoacoustics", J. Acoust. Soc. Am. 49(2B), 467-477 (1971);
// the steps and stopping rules are in DEVELOPERS.md, "Methods in detail".
// Thread: one thread at a time. Allocates: the reversal list only.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::ui {

enum class StepScale {
    linear,     // level +/- step (steps in cents)
    geometric,  // level * or / step (steps are factors > 1)
};

enum class StopReason {
    running,     // not done
    reversals,   // stop_reversals reached
    max_trials,  // max_trials answers
    floor_run,   // floor_run right in a row at min_level
};

struct StaircaseConfig {
    int n_down = 2;                          // correct in a row for a step down; default 2 (70.7 %)
    int n_up = 1;                            // wrong in a row for a step up; default 1
    StepScale scale = StepScale::geometric;  // default geometric
    double start_level = 40.0;               // first difference presented, cents; default 40
    std::vector<double> steps = {2.0, 2.0, 1.4142, 1.4142,
                                 1.1892};  // step after 0, 1, 2... reversals; the last repeats
    double min_level = 0.5;                // cents; default 0.5
    double max_level = 200.0;              // cents; default 200
    int stop_reversals = 12;               // the run ends after this many; default 12
    int threshold_reversals = 8;           // the last this many make the threshold (even); default 8
    int max_trials = 150;                  // the run also ends after this many answers; default 150
    int floor_run = 0;                     // ... or this many right in a row at min_level (0: never); default 0
};

// Throws Error naming the field when a setting is out of range.
void check_staircase_config(const StaircaseConfig& config);

class Staircase {
public:
    explicit Staircase(StaircaseConfig config);  // throws Error on a bad config

    double level() const { return level_; }  // difference to present next, cents
    void record(bool correct);               // the listener's answer at level()
    bool done() const;                       // enough reversals, max_trials, or floor_run at the floor
    StopReason stop_reason() const;
    int trials() const { return trials_; }
    int correct_count() const { return correct_; }
    int reversals() const { return static_cast<int>(reversal_levels_.size()); }
    const std::vector<double>& reversal_levels() const { return reversal_levels_; }
    double step() const;  // step size in use now
    // Mean of the last threshold_reversals reversal levels; NaN until there are that many.
    double threshold() const;
    const StaircaseConfig& config() const { return config_; }

private:
    void move(int direction);  // -1 down, +1 up

    StaircaseConfig config_;
    double level_ = 0.0;
    int trials_ = 0;
    int correct_ = 0;
    int correct_run_ = 0;
    int wrong_run_ = 0;
    int floor_right_ = 0;
    int last_direction_ = 0;
    std::vector<double> reversal_levels_;
};

}  // namespace beatless::ui
