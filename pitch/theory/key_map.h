// Key map — a target set laid on the 128 keys of a MIDI keyboard.
//
// Each target, brought into the octave above the root, goes to the key of its
// nearest equal-tempered step over the root key (7/5 at 582.5 c on the key a
// tritone up, 11/8 at 551.3 c there too); when two claim one key the nearer
// wins and the other is listed as not placed. Keys with no target keep equal
// temperament from the root, and every octave repeats the pattern, so the
// root key sounds root_hz exactly. The sequence layout instead puts the root
// on its key and the targets on the keys above it in the set's order, one a
// key (the tritone family's eleven tritones on eleven keys), the pattern
// repeated an octave higher every n+1 keys. Pure computation; any thread.
#pragma once

#include "pitch/theory/targets.h"

#include <array>
#include <cstddef>
#include <vector>

namespace beatless::pitch {

struct KeyTuning {
    double freq_hz = 0.0;
    int target = -1;               // index into the set's targets, or -1: equal-tempered from the root
    double cents_over_root = 0.0;  // above (or below, negative) the root
};

struct KeyMap {
    std::array<KeyTuning, 128> keys{};
    int root_key = 60;                  // the key that sounds root_hz
    std::vector<std::size_t> unplaced;  // targets that lost their key to a nearer one
};

enum class KeyLayout { nearest, sequence };

// root_key 0-127; root_hz > 0. Throws Error on an empty set.
KeyMap map_targets_to_keys(const TargetSet& set, double root_hz, int root_key, KeyLayout layout = KeyLayout::nearest);

}  // namespace beatless::pitch
