// Take words — the sentences a take's review prints, made from pitch/'s numbers.
#pragma once

#include "pitch/measure/intent.h"
#include "pitch/measure/partial_voice.h"
#include "pitch/measure/root_detect.h"
#include "pitch/measure/segment.h"

#include <string>

namespace beatless::ui {

// "root 110.001 Hz, confidence 0.97 (8 harmonics agree within 0.12 cents)", or why none was found.
std::string root_words(const pitch::RootEstimate& e);
// A target of the set by index: its ratio or cents ("7/5", "600c") and its name (the set's own, else the trade's,
// targets/names.toml); "" for an index out of range (a note between targets).
std::string target_text_of(const pitch::TargetSet& set, int index);
std::string target_name_of(const pitch::TargetSet& set, int index);
// The same target moved by the octaves it was matched at, as the live two-voice readout names an interval
// (pitch::shift_octaves, pitch::target_name_in_octave): 7/5 an octave up is "14/5"; unchanged for octaves == 0.
std::string target_text_at(const pitch::TargetSet& set, int index, int octaves);
std::string target_name_at(const pitch::TargetSet& set, int index, int octaves);
// A matched target as every review names it, one voice or two: between two voices (intervals true) target_text_at
// ("5/2"); a note against a drone keeps the set's ratio and says the octave ("3/2 +1oct", as `analyze` prints it).
// Its name likewise: target_name_at between two voices, else the set's own name. "" for an index out of range.
std::string target_words_at(const pitch::TargetSet& set, int index, int octaves, bool intervals);
std::string target_name_words_at(const pitch::TargetSet& set, int index, int octaves, bool intervals);
// "7/5 averages 6 cents flat (3 notes, spread 1.2 cents)", `name` the row's target_words_at; between two voices
// (intervals true) "... 6 cents narrow (3 intervals, ...)", wide for sharp.
std::string summary_words(const pitch::TargetSummary& row, const std::string& name, bool intervals);
// What a note's judgement adds to its deviation, or "" when it is plainly the nearest target:
// "meant 45/32, sung 12 c flat: that is 4.3 c from 7/5"; "between targets: 29.2 c flat of 7/5, the nearest";
// "unsure: dropouts in noise may move it 4.6 c" (pitch::judge_dropouts). Between two voices (intervals true): narrow
// and wide.
std::string judgement_words(const pitch::NoteJudgement& j, const pitch::TargetSet& set, bool intervals);
// Why an unsure note has no deviation: "dropouts in noise may move it 4.6 c" (judgement_words says "unsure: " first).
std::string unsure_words(const pitch::NoteJudgement& j);
// What a mark without a deviation says on the plots: "unsure" or "between targets" (short: "between").
std::string no_deviation_word(const pitch::NoteJudgement& j, bool short_form);
// "12 c flat", "0.5 c sharp", "in tune"; narrow and wide between two voices.
std::string off_words(double dev_cents, bool intervals);
// A take's length as every screen and command shows it, rounded to the nearest second: "12 s" under a minute, "1:05"
// (minutes:seconds) under an hour, "1:02:03" from an hour; "?" when unknown (not finite or negative).
std::string duration_words(double dur_s);
// A voice the drone removal hid on a drone's partial: "2.26-3.84 s: a steady voice on the drone's partial 3 (330.000 Hz,
// 3/2 +1oct) hidden with the drone: its pitch is not measured". root_hz: what the notes are measured against.
// Between two voices (intervals true) the target is named as an interval ("3/1").
std::string on_partial_words(const pitch::PartialVoice& v, const pitch::TargetSet& set, double root_hz, bool intervals);
// The one-line hint when a take gave nothing: the level, the estimated SNR and what to try.
std::string nothing_found_words(double loudest_dbfs, double snr_db, bool intervals);

}  // namespace beatless::ui
