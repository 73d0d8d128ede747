// Words shared by the commands and the screens: ordinals and how a beat is heard.
#pragma once

#include <string>

namespace beatless::ui {

std::string ordinal(int n);  // 1 -> "1st", 12 -> "12th"
// How a beat of this rate is heard, one word for tables, from pitch::beat_band:
// "still", "countable", "flutter", "rough"; "no drone" when none sounds; "-" when no pair beats.
std::string beat_heard_word(double beat_hz, bool drone_sounds);

}  // namespace beatless::ui
