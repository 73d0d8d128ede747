// Intent (intent.h): the in-order alignment of notes and expected targets, and the between-targets flag.
#include "pitch/measure/intent.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cstdint>
#include <string>

namespace beatless::pitch {

TargetMatch match_target(const TargetSet& set, std::size_t index, double measured_cents, bool octave_equivalent) {
    TargetMatch m;
    m.index = index;
    const double c = set.targets.at(index).interval.cents();
    m.octaves = octave_equivalent ? static_cast<int>(std::lround((measured_cents - c) / 1200.0)) : 0;
    m.target_cents = c + 1200.0 * m.octaves;
    m.dev_cents = measured_cents - m.target_cents;
    return m;
}

std::vector<NoteJudgement> judge_notes(const TargetSet& set, std::span<const double> note_cents,
                                       std::span<const int> expected, const IntentConfig& cfg) {
    if (set.targets.empty()) throw Error("note judgement: the target set '" + set.id + "' is empty");
    for (const int e : expected)
        if (e < 0 || static_cast<std::size_t>(e) >= set.targets.size())
            throw Error("note judgement: expected target " + std::to_string(e) + " is not in the set '" + set.id + "'");
    const std::size_t m = note_cents.size();
    std::vector<NoteJudgement> out(m);
    for (std::size_t i = 0; i < m; ++i) out[i].nearest = nearest_target(set, note_cents[i], cfg.octave_equivalent);

    // Which expected position each note is paired with (-1: none).
    std::vector<int> meant(m, -1);
    if (expected.size() == 1) {
        std::fill(meant.begin(), meant.end(), expected[0]);
    } else if (!expected.empty() && m > 0) {
        const std::size_t n = expected.size();
        const std::size_t len = n * std::max<std::size_t>(1, (m + n - 1) / n);  // the sequence repeated
        auto pair_cost = [&](std::size_t i, std::size_t j) {
            return std::fabs(
                match_target(set, static_cast<std::size_t>(expected[j % n]), note_cents[i], cfg.octave_equivalent)
                    .dev_cents);
        };
        // cost[i][j]: notes [0, i) against positions [0, j); move: 0 pair, 1 skip a note, 2 skip a target.
        const std::size_t w = len + 1;
        std::vector<double> cost((m + 1) * w, 0.0);
        std::vector<std::uint8_t> move((m + 1) * w, 0);
        for (std::size_t j = 1; j <= len; ++j) {
            cost[j] = cost[j - 1] + cfg.skip_target_cents;
            move[j] = 2;
        }
        for (std::size_t i = 1; i <= m; ++i) {
            cost[i * w] = cost[(i - 1) * w] + cfg.skip_note_cents;
            move[i * w] = 1;
            for (std::size_t j = 1; j <= len; ++j) {
                double best = cost[(i - 1) * w + j - 1] + pair_cost(i - 1, j - 1);
                std::uint8_t mv = 0;
                const double skip_note = cost[(i - 1) * w + j] + cfg.skip_note_cents;
                if (skip_note < best) best = skip_note, mv = 1;
                const double skip_target = cost[i * w + j - 1] + cfg.skip_target_cents;
                if (skip_target < best) best = skip_target, mv = 2;
                cost[i * w + j] = best;
                move[i * w + j] = mv;
            }
        }
        // Targets left after the last note cost nothing (the take stopped early): end where the notes end cheapest.
        std::size_t j = 0;
        for (std::size_t k = 1; k <= len; ++k)
            if (cost[m * w + k] < cost[m * w + j]) j = k;
        for (std::size_t i = m; i > 0 || j > 0;) {
            const std::uint8_t mv = move[i * w + j];
            if (mv == 0) {
                meant[i - 1] = expected[(j - 1) % n];
                --i, --j;
            } else if (mv == 1) {
                --i;
            } else {
                --j;
            }
        }
    }
    for (std::size_t i = 0; i < m; ++i) {
        NoteJudgement& r = out[i];
        if (meant[i] >= 0) {
            const TargetMatch t =
                match_target(set, static_cast<std::size_t>(meant[i]), note_cents[i], cfg.octave_equivalent);
            r.meant_index = meant[i];
            r.meant_octaves = t.octaves;
            r.meant_target_cents = t.target_cents;
            r.meant_dev_cents = t.dev_cents;
            r.nearer_other = r.nearest.index != static_cast<std::size_t>(meant[i]) &&
                             std::fabs(r.nearest.dev_cents) < std::fabs(t.dev_cents);
        } else {
            r.between = std::fabs(r.nearest.dev_cents) > cfg.between_cents;
        }
    }
    return out;
}

void judge_dropouts(NoteJudgement& judged, double dropout_bias_cents, double heard_share, const IntentConfig& cfg) {
    judged.unsure_cents = std::fabs(dropout_bias_cents) > cfg.unsure_cents ? std::fabs(dropout_bias_cents) : NAN;
    judged.unsure_heard = heard_share < cfg.min_heard_share ? heard_share : NAN;
}

}  // namespace beatless::pitch
