// Take words (take_words.h).
#include "ui/session/take_words.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/targets.h"
#include "ui/session/target_files.h"

#include <cmath>
#include <cstdio>

namespace beatless::ui {

using pitch::format_trimmed;

std::string target_text_of(const pitch::TargetSet& set, int index) {
    if (index < 0 || static_cast<std::size_t>(index) >= set.targets.size()) return "";
    return set.targets[static_cast<std::size_t>(index)].interval.str();
}

std::string target_name_of(const pitch::TargetSet& set, int index) {
    if (index < 0 || static_cast<std::size_t>(index) >= set.targets.size()) return "";
    const pitch::Target& t = set.targets[static_cast<std::size_t>(index)];
    if (!t.name.empty()) return t.name;
    const std::string* n = interval_names().find(t.interval);
    return n ? *n : "";
}

std::string target_text_at(const pitch::TargetSet& set, int index, int octaves) {
    if (octaves == 0 || index < 0 || static_cast<std::size_t>(index) >= set.targets.size())
        return target_text_of(set, index);
    try {
        return pitch::shift_octaves(set.targets[static_cast<std::size_t>(index)].interval, octaves).str();
    } catch (const Error&) {  // the shifted ratio overflows: the target with its octaves said
        return target_text_of(set, index) + (octaves > 0 ? " +" : " ") + std::to_string(octaves) + "oct";
    }
}

std::string target_name_at(const pitch::TargetSet& set, int index, int octaves) {
    if (octaves == 0 || index < 0 || static_cast<std::size_t>(index) >= set.targets.size())
        return target_name_of(set, index);
    return pitch::target_name_in_octave(set.targets[static_cast<std::size_t>(index)], octaves, interval_names());
}

std::string target_words_at(const pitch::TargetSet& set, int index, int octaves, bool intervals) {
    if (intervals) return target_text_at(set, index, octaves);
    std::string t = target_text_of(set, index);
    if (!t.empty() && octaves != 0) t += (octaves > 0 ? " +" : " ") + std::to_string(octaves) + "oct";
    return t;
}

std::string target_name_words_at(const pitch::TargetSet& set, int index, int octaves, bool intervals) {
    return intervals ? target_name_at(set, index, octaves) : target_name_of(set, index);
}

std::string on_partial_words(const pitch::PartialVoice& v, const pitch::TargetSet& set, double root_hz,
                             bool intervals) {
    std::string where;
    if (!set.targets.empty() && root_hz > 0.0) {
        const pitch::TargetMatch m = pitch::nearest_target(set, 1200.0 * std::log2(v.f_hz / root_hz), true);
        where = ", " + target_words_at(set, static_cast<int>(m.index), m.octaves, intervals);
        if (std::fabs(m.dev_cents) >= 0.05) where += " " + off_words(m.dev_cents, intervals);
    }
    return format_trimmed(v.start_s, 2) + "-" + format_trimmed(v.end_s, 2) +
           " s: a steady voice on the drone's partial " + std::to_string(v.partial) + " (" + format_trimmed(v.f_hz, 3) +
           " Hz" + where + ") is hidden with the drone: its pitch is not measured";
}

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

std::string off_words(double dev_cents, bool intervals) {
    if (!std::isfinite(dev_cents)) return "not measured";
    if (std::fabs(dev_cents) < 0.05) return "in tune";
    return format_trimmed(std::fabs(dev_cents), 1) + " c " +
           (dev_cents > 0 ? (intervals ? "wide" : "sharp") : (intervals ? "narrow" : "flat"));
}

std::string judgement_words(const pitch::NoteJudgement& j, const pitch::TargetSet& set, bool intervals) {
    // Each target in the octave it was matched at, as the note's own line names it.
    const std::string nearest = target_words_at(set, static_cast<int>(j.nearest.index), j.nearest.octaves, intervals);
    if (j.unsure()) return "unsure: " + unsure_words(j);
    if (j.between)
        return "between targets: " + off_words(j.nearest.dev_cents, intervals) + " of " + nearest + ", the nearest";
    if (j.meant_index >= 0 && j.nearer_other)
        return "meant " + target_words_at(set, j.meant_index, j.meant_octaves, intervals) + ", sung " +
               off_words(j.meant_dev_cents, intervals) + ": that is " +
               format_trimmed(std::fabs(j.nearest.dev_cents), 1) + " c from " + nearest;
    return "";
}

std::string unsure_words(const pitch::NoteJudgement& j) {
    std::string heard, moved;
    if (std::isfinite(j.unsure_heard))
        heard = "its pitch heard only " + std::to_string(std::lround(100.0 * j.unsure_heard)) + " % of the time";
    if (std::isfinite(j.unsure_cents))
        moved = "dropouts in noise may move it " + format_trimmed(j.unsure_cents, 1) + " c";
    return heard.empty() ? moved : moved.empty() ? heard : heard + "; " + moved;
}

std::string no_deviation_word(const pitch::NoteJudgement& j, bool short_form) {
    if (j.unsure()) return "unsure";
    return short_form ? "between" : "between targets";
}

std::string duration_words(double dur_s) {
    if (!(dur_s >= 0.0 && dur_s < 1e9)) return "?";  // not finite, negative or absurd
    const long long whole = std::llround(dur_s);     // to the nearest second: 11.984 s is 12 s
    char buf[48];
    if (whole < 60)
        std::snprintf(buf, sizeof buf, "%lld s", whole);
    else if (whole < 3600)
        std::snprintf(buf, sizeof buf, "%lld:%02lld", whole / 60, whole % 60);
    else
        std::snprintf(buf, sizeof buf, "%lld:%02lld:%02lld", whole / 3600, (whole / 60) % 60, whole % 60);
    return buf;
}

std::string nothing_found_words(double loudest_dbfs, double snr_db, bool intervals) {
    std::string s = std::string("no held ") + (intervals ? "intervals" : "notes") + " found: loudest " +
                    format_trimmed(loudest_dbfs, 0) + " dBFS, estimated signal-to-noise ratio " +
                    (std::isfinite(snr_db) ? format_trimmed(snr_db, 0) + " dB" : std::string("unknown"));
    if (std::isfinite(snr_db) && snr_db < 10.0)
        return s + "; try a quieter room, the microphone closer to the performer, or a louder take";
    if (loudest_dbfs < -40.0) return s + "; try recording louder (nearer the microphone or with more gain)";
    return s + "; try notes held longer than 0.15 s, or --lowest for notes below 55 Hz";
}

}  // namespace beatless::ui
