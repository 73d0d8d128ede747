// Take export — an analysis as `analyze` prints it: JSON (one object: the file, the root, the notes or intervals with
// their judgement, the per-target summary) and CSV (one row a note or an interval). The analyze command prints them; the Review
// screen writes them beside a take. Thread: any. Allocates: yes.
#pragma once

#include "ui/session/json.h"
#include "ui/session/take_analysis.h"

#include <string>
#include <vector>

namespace beatless::ui {

std::string one_voice_json(const std::string& file, const pitch::TargetSet& set, const OneVoiceAnalysis& a);
std::string one_voice_csv(const pitch::TargetSet& set, const OneVoiceAnalysis& a);  // header and a row a note
// Two voices alike: the held intervals (both voices' pitches, the ratio, the target in the octave it was matched at,
// the deviation, the beat rates) and the per-target summary; CSV one row an interval.
std::string two_voice_json(const std::string& file, const pitch::TargetSet& set, const TwoVoiceAnalysis& a);
std::string two_voice_csv(const pitch::TargetSet& set, const TwoVoiceAnalysis& a);

// Pieces the two-voice JSON shares: a target by index (null between targets); what was meant, the nearest and the
// remark; the per-target summary (intervals: narrow and wide).
void add_target_json(JsonWriter& j, const pitch::TargetSet& set, int index);
void add_judgement_json(JsonWriter& j, const pitch::TargetSet& set, const pitch::NoteJudgement& g, bool intervals);
void add_summary_json(JsonWriter& j, const pitch::TargetSet& set, const std::vector<pitch::TargetSummary>& rows,
                      bool dyads);

}  // namespace beatless::ui
