// Take export — a one-voice analysis as `analyze` prints it: JSON (one object: the file, the root, the notes with
// their judgement, the per-target summary) and CSV (one row a note). The analyze command prints them; the Review
// screen writes them beside a take. Thread: any. Allocates: yes.
#pragma once

#include "ui/session/json.h"
#include "ui/session/take_analysis.h"

#include <string>
#include <vector>

namespace beatless::ui {

std::string one_voice_json(const std::string& file, const pitch::TargetSet& set, const OneVoiceAnalysis& a);
std::string one_voice_csv(const pitch::TargetSet& set, const OneVoiceAnalysis& a);  // header and a row a note

// Pieces the two-voice JSON shares: a target by index (null between targets); what was meant, the nearest and the
// remark; the per-target summary (intervals: narrow and wide).
void add_target_json(JsonWriter& j, const pitch::TargetSet& set, int index);
void add_judgement_json(JsonWriter& j, const pitch::TargetSet& set, const pitch::NoteJudgement& g, bool intervals);
void add_summary_json(JsonWriter& j, const pitch::TargetSet& set, const std::vector<pitch::TargetSummary>& rows,
                      bool dyads);

}  // namespace beatless::ui
