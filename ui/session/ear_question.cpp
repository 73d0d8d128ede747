// Ear question — see ear_question.h.
#include "ui/session/ear_question.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <string>
#include <utility>

namespace beatless::ui {

namespace {
constexpr double kSameCents = 1e-6;  // intervals closer than this are the same pitch
}  // namespace

EarQuestioner::EarQuestioner(EarTask task, std::vector<double> target_cents, int rounds, std::uint64_t seed)
    : task_(task),
      cents_(std::move(target_cents)),
      rounds_(static_cast<std::size_t>(rounds < 1 ? 1 : rounds)),
      rng_(seed) {
    if (rounds < 1) throw Error("ear question: rounds " + std::to_string(rounds) + " must be at least 1");
    if (cents_.empty()) throw Error("ear question: needs an interval");
    for (std::size_t i = 0; i < cents_.size(); ++i)
        if (!std::isfinite(cents_[i]))
            throw Error("ear question: interval " + std::to_string(i + 1) + " is not a finite interval");
    if (task_ == EarTask::identify) {
        for (std::size_t i = 0; i < cents_.size(); ++i)
            for (std::size_t j = i + 1; j < cents_.size(); ++j)
                if (std::fabs(cents_[i] - cents_[j]) < kSameCents)
                    throw Error("ear question: intervals " + std::to_string(i + 1) + " and " + std::to_string(j + 1) +
                                " have the same pitch, so no answer could tell them apart");
        if (cents_.size() < 2) throw Error("ear question: naming an interval needs at least two to choose from");
        deck_.reserve(cents_.size());
        deal();
    }
}

void EarQuestioner::deal() {
    deck_.clear();
    for (std::size_t i = 0; i < cents_.size(); ++i) deck_.push_back(i);
    for (std::size_t i = deck_.size(); i > 1; --i) std::swap(deck_[i - 1], deck_[rng_.below(i)]);  // Fisher-Yates
    deck_at_ = 0;
}

EarQuestion EarQuestioner::next(double level_cents) {
    EarQuestion q;
    q.task = task_;
    ++asked_;
    if (task_ == EarTask::identify) {
        if (deck_at_ >= deck_.size()) deal();
        q.target = deck_[deck_at_++];
        q.tones = 1;
        q.tone_cents = {cents_[q.target], cents_[q.target]};
        q.correct_answer = static_cast<int>(q.target);
        return q;
    }
    q.target = 0;
    q.level_cents = level_cents;
    q.mistune_sign = rng_.below(2) == 0 ? 1 : -1;
    q.tones = 2;
    const int pure_at = static_cast<int>(rng_.below(2));
    const double pure = cents_[0], off = cents_[0] + q.mistune_sign * level_cents;
    q.tone_cents = pure_at == 0 ? std::array<double, 2>{pure, off} : std::array<double, 2>{off, pure};
    q.correct_answer = pure_at;
    return q;
}

std::vector<std::pair<std::size_t, std::size_t>> pairs_closest_first(const std::vector<double>& c) {
    std::vector<std::pair<std::size_t, std::size_t>> pairs;
    for (std::size_t i = 0; i < c.size(); ++i)
        for (std::size_t k = i + 1; k < c.size(); ++k) pairs.emplace_back(i, k);
    std::stable_sort(pairs.begin(), pairs.end(), [&](const auto& a, const auto& b) {
        return std::fabs(c[a.first] - c[a.second]) < std::fabs(c[b.first] - c[b.second]);
    });
    return pairs;
}

int pair_answers(const std::vector<std::vector<int>>& n, std::size_t i, std::size_t j) {
    return n[i][i] + n[j][j] + n[i][j] + n[j][i];
}

double pair_share_right(const std::vector<std::vector<int>>& n, std::size_t i, std::size_t j) {
    const double right = n[i][i] + n[j][j];
    const double all = right + n[i][j] + n[j][i];
    return all > 0 ? right / all : NAN;
}

}  // namespace beatless::ui
