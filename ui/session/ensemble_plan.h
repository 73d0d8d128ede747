// Ensemble plan — who sings which voice on which channel, from the lists a user types (`beatless ensemble
// --channels 1,2,3,4 --names "S,A,T,B" --voices 4,3,2,1`) or the Ensemble screen saves.
// Method: ours; a plain list of names reads as a score does, top voice first (common practice); rules by plan_players.
// Thread: any (setup). Allocates: yes. Every problem throws Error naming the option and the value.
#pragma once

#include "pitch/measure/ensemble_analyzer.h"
#include "ui/session/chord_files.h"
#include "ui/session/usage_error.h"

#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

struct PlanLists {
    std::string channels;  // "1,2,3,4" or empty
    std::string names;     // "S,A,T,B" or empty
    std::string voices;    // "4,3,2,1" or empty
};

// Lists are comma-separated; channels and voices count from 1 (voice 1 is the chord's lowest). Player k is on
// channel k unless --channels says. Voices: --voices if given; else names as name=ratio (S=7/4) say them; else
// a plain list of names reads as a score does, top voice first (S,A,T,B over 4:5:6:7 sing 7/4, 3/2, 5/4, 1/1,
// common practice); with neither, player k sings voice k and is named after the chord file's part, else
// "Voice k". Throws Error naming the option and the value (UsageError when --voices and name=ratio both say
// the voices).
std::vector<pitch::Player> plan_players(const ChordFile& chord, const PlanLists& lists);

// The lists back from players (what the screen saves).
PlanLists lists_of(const std::vector<pitch::Player>& players);

}  // namespace beatless::ui
