#include "ui/session/staircase.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <cmath>
#include <string>
#include <utility>

namespace beatless::ui {

using pitch::format_trimmed;

namespace {

Error bad(const std::string& field, const std::string& why) { return Error("staircase: " + field + " " + why); }

}  // namespace

void check_staircase_config(const StaircaseConfig& c) {
    if (c.n_down < 1 || c.n_down > 5) throw bad("n_down", std::to_string(c.n_down) + " must be 1 to 5");
    if (c.n_up < 1 || c.n_up > 5) throw bad("n_up", std::to_string(c.n_up) + " must be 1 to 5");
    if (!(c.min_level > 0.0) || !std::isfinite(c.min_level))
        throw bad("min_level", format_trimmed(c.min_level, 6) + " must be above 0 cents");
    if (!(c.max_level > c.min_level) || !std::isfinite(c.max_level))
        throw bad("max_level", format_trimmed(c.max_level, 6) + " must be finite and above min_level");
    if (!(c.start_level >= c.min_level && c.start_level <= c.max_level))
        throw bad("start_level", format_trimmed(c.start_level, 6) + " must lie between min_level and max_level");
    if (c.steps.empty()) throw bad("steps", "must list at least one step size");
    for (double s : c.steps) {
        const bool ok = c.scale == StepScale::geometric ? (s > 1.0 && s <= 4.0) : (s > 0.0 && s <= c.max_level);
        if (!ok || !std::isfinite(s))
            throw bad("steps", format_trimmed(s, 6) + (c.scale == StepScale::geometric
                                                           ? " must be a factor above 1 and at most 4"
                                                           : " must be above 0 and at most max_level"));
    }
    if (c.stop_reversals < 2 || c.stop_reversals > 100)
        throw bad("stop_reversals", std::to_string(c.stop_reversals) + " must be 2 to 100");
    if (c.threshold_reversals < 2 || c.threshold_reversals > c.stop_reversals || c.threshold_reversals % 2 != 0)
        throw bad("threshold_reversals",
                  std::to_string(c.threshold_reversals) + " must be even, at least 2 and at most stop_reversals");
    if (c.floor_run < 0 || c.floor_run > 1000)
        throw bad("floor_run", std::to_string(c.floor_run) + " must be 0 to 1000");
    if (c.max_trials < 1 || c.max_trials > 10000)
        throw bad("max_trials", std::to_string(c.max_trials) + " must be 1 to 10000");
}

Staircase::Staircase(StaircaseConfig config) : config_(std::move(config)) {
    check_staircase_config(config_);
    level_ = config_.start_level;
}

double Staircase::step() const {
    const std::size_t i = std::min(reversal_levels_.size(), config_.steps.size() - 1);
    return config_.steps[i];
}

void Staircase::move(int direction) {
    if (last_direction_ != 0 && direction != last_direction_) reversal_levels_.push_back(level_);
    last_direction_ = direction;
    const double s = step();
    if (config_.scale == StepScale::geometric)
        level_ = direction < 0 ? level_ / s : level_ * s;
    else
        level_ += direction * s;
    level_ = std::clamp(level_, config_.min_level, config_.max_level);
}

void Staircase::record(bool correct) {
    if (done()) return;
    ++trials_;
    const bool at_floor = level_ <= config_.min_level;
    floor_right_ = correct && at_floor ? floor_right_ + 1 : 0;
    if (correct) {
        ++correct_;
        wrong_run_ = 0;
        if (++correct_run_ >= config_.n_down) {
            correct_run_ = 0;
            move(-1);
        }
    } else {
        correct_run_ = 0;
        if (++wrong_run_ >= config_.n_up) {
            wrong_run_ = 0;
            move(+1);
        }
    }
}

bool Staircase::done() const { return stop_reason() != StopReason::running; }

StopReason Staircase::stop_reason() const {
    if (reversals() >= config_.stop_reversals) return StopReason::reversals;
    if (config_.floor_run > 0 && floor_right_ >= config_.floor_run) return StopReason::floor_run;
    if (trials_ >= config_.max_trials) return StopReason::max_trials;
    return StopReason::running;
}

double Staircase::threshold() const {
    const auto n = static_cast<std::size_t>(config_.threshold_reversals);
    if (reversal_levels_.size() < n) return NAN;
    double sum = 0.0;
    for (std::size_t i = reversal_levels_.size() - n; i < reversal_levels_.size(); ++i)
        sum += config_.scale == StepScale::geometric ? std::log(reversal_levels_[i]) : reversal_levels_[i];
    const double mean = sum / static_cast<double>(n);
    return config_.scale == StepScale::geometric ? std::exp(mean) : mean;
}

}  // namespace beatless::ui
