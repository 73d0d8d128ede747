// Ensemble plan — who sings which voice on which channel, from the lists a
// user types (`beatless ensemble --channels 1,2,3,4 --names "S,A,T,B"
// --voices 4,3,2,1`) or the Ensemble screen saves.
//
// Lists are comma-separated; channels and voices count from 1 (voice 1 is
// the chord's lowest). The number of players is the length of the longest
// list given, or the chord's number of voices when none is (at most 8).
// Defaults: player k on channel k, singing voice k; named after the chord
// file's part for that voice, else "Voice k". Every problem throws Error
// naming the option and the value.
#pragma once

#include "pitch/ensemble.h"
#include "ui/chord_files.h"

#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

struct PlanLists {
    std::string channels;   // "1,2,3,4" or empty
    std::string names;      // "S,A,T,B" or empty
    std::string voices;     // "4,3,2,1" or empty
};

std::vector<pitch::Player> plan_players(const ChordFile& chord, const PlanLists& lists);

// The lists back from players (what the screen saves).
PlanLists lists_of(const std::vector<pitch::Player>& players);

}  // namespace beatless::ui
