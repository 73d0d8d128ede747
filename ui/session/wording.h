// Words shared by the commands and the screens: ordinals and how a beat is heard.
#pragma once

#include "audio/device.h"

#include <string>

namespace beatless::ui {

std::string ordinal(int n);  // 1 -> "1st", 12 -> "12th"
// How a beat of this rate is heard, one word for tables, from pitch::beat_band:
// "still", "countable", "flutter", "rough"; "no drone" when none sounds; "-" when no pair beats.
std::string beat_heard_word(double beat_hz, bool drone_sounds);
// Why a device was chosen, after "chosen as": "the sound server's default source", ...
std::string choice_text(audio::ChoiceWhy why, audio::Direction dir);

}  // namespace beatless::ui
