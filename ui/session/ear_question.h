// Ear question — what an ear drill plays next, and which answer is right: discriminate (pure or mistuned, which
// was pure?) or identify (which of the drill's intervals?). Method: forced choice, rounds shuffled by Fisher-Yates
// from a seeded source (ui/session/rng.h), so a session replays exactly; DEVELOPERS.md, "Methods in detail".
// Thread: one thread at a time. Allocates: in the constructor only.
#pragma once

#include "ui/session/rng.h"

#include <array>
#include <cstddef>
#include <cstdint>
#include <utility>
#include <vector>

namespace beatless::ui {

enum class EarTask {
    discriminate,  // pure or mistuned: a threshold in cents
    identify,      // which interval: a confusion matrix
};

struct EarQuestion {
    EarTask task = EarTask::discriminate;
    std::size_t target = 0;              // the interval played (index into the drill's targets)
    double level_cents = 0.0;            // discriminate: the mistuning played, cents; identify: 0
    int mistune_sign = 1;                // discriminate: +1 wider, -1 narrower
    int tones = 1;                       // 2 for discriminate, 1 for identify
    std::array<double, 2> tone_cents{};  // above the root, in playing order
    int correct_answer = 0;              // discriminate: position of the pure one (0 or 1); identify: the target
};

class EarQuestioner {
public:
    // target_cents: the drill's intervals in cents above the root (discriminate
    // uses the first). Throws Error when identify has fewer than two of
    // different pitch, or rounds is below 1.
    EarQuestioner(EarTask task, std::vector<double> target_cents, int rounds, std::uint64_t seed);

    // discriminate: a question at this mistuning; identify: the next of the
    // deal (level ignored; after the last, a new round is dealt).
    EarQuestion next(double level_cents);
    EarTask task() const { return task_; }
    std::size_t total() const {
        return task_ == EarTask::identify ? cents_.size() * rounds_ : 0;
    }  // identify: questions in all
    std::size_t asked() const { return asked_; }

private:
    void deal();

    EarTask task_;
    std::vector<double> cents_;
    std::size_t rounds_;
    std::vector<std::size_t> deck_;
    std::size_t deck_at_ = 0;
    std::size_t asked_ = 0;
    Rng rng_;
};

// Every pair (i < j) of the intervals, the closest in pitch first (ties in index order).
std::vector<std::pair<std::size_t, std::size_t>> pairs_closest_first(const std::vector<double>& target_cents);
// Answers to i or j that named i or j: the count pair_share_right divides by.
int pair_answers(const std::vector<std::vector<int>>& counts, std::size_t i, std::size_t j);

// Per-pair share right from a confusion matrix counts[played][answered]:
// of the answers to i or j that named i or j, the share that named the one
// played, (n_ii + n_jj) / (n_ii + n_ij + n_ji + n_jj); NaN with none.
double pair_share_right(const std::vector<std::vector<int>>& counts, std::size_t i, std::size_t j);

}  // namespace beatless::ui
