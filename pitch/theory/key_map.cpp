#include "pitch/theory/key_map.h"

#include "pitch/base/error.h"

#include <cmath>

namespace beatless::pitch {

namespace {

// Root, then each target (unisons and octaves of the root left out), repeated by octaves.
KeyMap sequence_map(const TargetSet& set, double root_hz, int root_key) {
    KeyMap map;
    map.root_key = root_key;
    std::vector<int> pattern = {-1};
    std::vector<double> cents = {0.0};
    for (std::size_t i = 0; i < set.targets.size(); ++i) {
        const double c = set.targets[i].interval.cents();
        if (std::abs(c / 1200.0 - std::round(c / 1200.0)) < 1e-12) continue;
        pattern.push_back(static_cast<int>(i));
        cents.push_back(c);
    }
    const int n = static_cast<int>(pattern.size());
    for (int k = 0; k < 128; ++k) {
        const int d = k - root_key;
        const int octave = static_cast<int>(std::floor(static_cast<double>(d) / n));
        const auto slot = static_cast<std::size_t>(d - n * octave);
        KeyTuning& key = map.keys[static_cast<std::size_t>(k)];
        key.target = pattern[slot];
        key.cents_over_root = 1200.0 * octave + cents[slot];
        key.freq_hz = root_hz * std::exp2(key.cents_over_root / 1200.0);
    }
    return map;
}

}  // namespace

KeyMap map_targets_to_keys(const TargetSet& set, double root_hz, int root_key, KeyLayout layout) {
    if (set.targets.empty()) throw Error("target set '" + set.id + "': no targets to lay on the keys");
    if (layout == KeyLayout::sequence) return sequence_map(set, root_hz, root_key);
    KeyMap map;
    map.root_key = root_key;
    std::array<int, 12> claim;
    claim.fill(-1);
    std::array<double, 12> claim_cents{};  // the claiming target's cents within the octave
    std::array<double, 12> claim_off{};    // and its distance from the key's step
    for (std::size_t i = 0; i < set.targets.size(); ++i) {
        const double c = set.targets[i].interval.cents();
        const double in_octave = c - 1200.0 * std::floor(c / 1200.0);
        int degree = static_cast<int>(std::lround(in_octave / 100.0));
        double cents = in_octave;
        if (degree == 12) {
            degree = 0;
            cents -= 1200.0;
        }
        const double off = std::abs(cents - 100.0 * degree);
        const int held = claim[static_cast<std::size_t>(degree)];
        if (held >= 0 && std::abs(claim_cents[static_cast<std::size_t>(degree)] - cents) < 1e-9)
            continue;  // 2/1 as 1/1
        if (held >= 0 && claim_off[static_cast<std::size_t>(degree)] <= off) {
            map.unplaced.push_back(i);
            continue;
        }
        if (held >= 0) map.unplaced.push_back(static_cast<std::size_t>(held));
        claim[static_cast<std::size_t>(degree)] = static_cast<int>(i);
        claim_cents[static_cast<std::size_t>(degree)] = cents;
        claim_off[static_cast<std::size_t>(degree)] = off;
    }
    for (int k = 0; k < 128; ++k) {
        const int d = k - root_key;
        const int octave = static_cast<int>(std::floor(d / 12.0));
        const auto degree = static_cast<std::size_t>(d - 12 * octave);
        KeyTuning& key = map.keys[static_cast<std::size_t>(k)];
        key.target = claim[degree];
        key.cents_over_root =
            1200.0 * octave + (claim[degree] >= 0 ? claim_cents[degree] : 100.0 * static_cast<double>(degree));
        key.freq_hz = root_hz * std::exp2(key.cents_over_root / 1200.0);
    }
    return map;
}

}  // namespace beatless::pitch
