// Words shared by the commands and the screens: ordinals, how a beat is heard, a group's references and states.
#pragma once

#include "audio/device.h"
#include "pitch/measure/duo_advice.h"
#include "pitch/measure/ensemble_analyzer.h"
#include "pitch/measure/two_voice.h"

#include <string>
#include <string_view>

namespace beatless::ui {

std::string ordinal(int n);  // 1 -> "1st", 12 -> "12th"
// How a beat of this rate is heard, one word for tables, from pitch::beat_band:
// "still", "countable", "flutter", "rough"; "no drone" when none sounds; "-" when no pair beats.
std::string beat_heard_word(double beat_hz, bool drone_sounds);
std::string_view reference_title(pitch::ChordReference r);  // "Drone root", "Sounding bass", "Best-fit root"
std::string_view player_state_word(
    pitch::PlayerState s);  // "sounding", "resting", "silent channel", "same voice as", "other note"
// Two voices heard as one series: a key for JSON ("one_series", "near_unison", "octave"; "" for none)
// and the words a screen or text line shows ("one pitch: a single note, or a unison or octave too close to tell").
std::string_view blend_key(pitch::Blend b);
std::string_view blend_words(pitch::Blend b);
// "upper voice", "lower voice"; "" for none.
std::string_view mover_words(pitch::DuoMover m);
// "move the upper voice down 3 c", "in tune", "" (nothing to judge).
std::string move_words(const pitch::DuoAdvice& a);
// An interval's deviation in a word: "in tune" within the width, else "wide" (+) or "narrow" (-).
std::string_view interval_word(double dev_cents, double in_tune_cents);

// Why a device was chosen, after "chosen as": "the sound server's default source", ...
std::string choice_text(audio::ChoiceWhy why, audio::Direction dir);

}  // namespace beatless::ui
