// Take words (take_words.h).
#include "ui/session/take_words.h"

#include "pitch/base/text.h"

#include <cmath>

namespace beatless::ui {

using pitch::format_trimmed;

std::string root_words(const pitch::RootEstimate& e) {
    switch (e.status) {
        case pitch::RootStatus::found:
            return "root " + format_trimmed(e.root_hz, 3) + " Hz, confidence " + format_trimmed(e.confidence, 2) +
                   " (" + std::to_string(e.harmonics_used) + " harmonics agree within " +
                   format_trimmed(e.spread_cents, 3) + " cents)";
        case pitch::RootStatus::no_steady_root:
            return "no steady drone or pedal tone found (best candidate " + format_trimmed(e.root_hz, 2) +
                   " Hz, confidence " + format_trimmed(e.confidence, 2) + ")";
        case pitch::RootStatus::no_sound: break;
    }
    return "no sound above the silence threshold: nothing to find a root in";
}

std::string summary_words(const pitch::TargetSummary& row, const std::string& name, bool intervals) {
    std::string s = name + " averages ";
    const double m = row.mean_dev_cents;
    if (std::fabs(m) < 0.05)
        s += "in tune";
    else
        s += format_trimmed(std::fabs(m), 1) + (std::fabs(m) < 1.05 && std::fabs(m) >= 0.95 ? " cent " : " cents ") +
             (m > 0 ? (intervals ? "wide" : "sharp") : (intervals ? "narrow" : "flat"));
    const char* unit =
        intervals ? (row.count == 1 ? " interval" : " intervals") : (row.count == 1 ? " note" : " notes");
    s += " (" + std::to_string(row.count) + unit;
    if (row.count > 1) s += ", spread " + format_trimmed(row.spread_cents, 1) + " cents";
    s += ")";
    return s;
}

}  // namespace beatless::ui
