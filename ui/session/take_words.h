// Take words — the sentences a take's review prints, made from pitch/'s numbers.
#pragma once

#include "pitch/measure/root_detect.h"
#include "pitch/measure/segment.h"

#include <string>

namespace beatless::ui {

// "root 110.001 Hz, confidence 0.97 (8 harmonics agree within 0.12 cents)", or why none was found.
std::string root_words(const pitch::RootEstimate& e);
// "7/5 averages 6 cents flat (3 notes, spread 1.2 cents)"; between two voices
// (intervals true) "... 6 cents narrow (3 intervals, ...)", wide for sharp.
std::string summary_words(const pitch::TargetSummary& row, const std::string& name, bool intervals);

}  // namespace beatless::ui
