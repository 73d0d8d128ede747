#include "ui/session/ear_question.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <string>
#include <utility>

namespace beatless::ui {


namespace {
constexpr double kTieLog = 1e-3;        // separations within 0.1 % count as equally near
constexpr double kSameCents = 1e-6;     // targets closer than this are the same pitch
}  // namespace

EarQuestioner::EarQuestioner(std::vector<double> target_cents, EarMode mode, std::uint64_t seed)
    : cents_(std::move(target_cents)), mode_(mode), rng_(seed) {
    for (std::size_t i = 0; i < cents_.size(); ++i) {
        if (!std::isfinite(cents_[i])) throw Error("ear question: target " + std::to_string(i + 1) + " is not a finite interval");
        for (std::size_t j = i + 1; j < cents_.size(); ++j) {
            const double sep = std::fabs(cents_[i] - cents_[j]);
            if (sep < kSameCents) continue;
            const bool i_lower = cents_[i] < cents_[j];
            pairs_.push_back({i_lower ? i : j, i_lower ? j : i, sep});
        }
    }
    if (pairs_.empty()) throw Error("ear question: needs at least two targets of different pitch");
    candidates_.reserve(pairs_.size());
}

std::vector<double> EarQuestioner::separations() const {
    std::vector<double> s;
    for (const Pair& p : pairs_) s.push_back(p.sep_cents);
    std::sort(s.begin(), s.end());
    s.erase(std::unique(s.begin(), s.end(), [](double a, double b) { return std::fabs(std::log(a / b)) < kTieLog; }),
            s.end());
    return s;
}

EarQuestion EarQuestioner::next(double level_cents) {
    const double want = std::log(std::max(level_cents, 1e-6));
    double best = INFINITY;
    for (const Pair& p : pairs_) best = std::min(best, std::fabs(std::log(p.sep_cents) - want));
    candidates_.clear();
    for (std::size_t k = 0; k < pairs_.size(); ++k)
        if (std::fabs(std::log(pairs_[k].sep_cents) - want) <= best + kTieLog) candidates_.push_back(k);
    const Pair& p = pairs_[candidates_[rng_.below(candidates_.size())]];

    EarQuestion q;
    q.choices = {p.lo, p.hi};
    q.diff_cents = p.sep_cents;
    const bool lo_first = rng_.below(2) == 0;
    q.played = lo_first ? std::array<std::size_t, 2>{p.lo, p.hi} : std::array<std::size_t, 2>{p.hi, p.lo};
    if (mode_ == EarMode::one_interval) {
        q.played[1] = q.played[0];
        q.asked = q.played[0];
        q.correct_answer = q.played[0] == p.lo ? 0 : 1;
    } else {
        q.asked = rng_.below(2) == 0 ? p.lo : p.hi;
        q.correct_answer = q.played[0] == q.asked ? 0 : 1;
    }
    return q;
}

}  // namespace beatless::ui
