// Take export (take_export.h).
#include "ui/session/take_export.h"

#include "pitch/base/text.h"
#include "ui/session/log_csv.h"
#include "ui/session/take_words.h"

#include <cmath>
#include <cstdint>

namespace beatless::ui {

namespace {
// A CSV number: up to `decimals` places, empty when not finite.
std::string num(double v, int decimals) {
    return std::isfinite(v) ? pitch::format_trimmed(v, decimals) : std::string();
}
}  // namespace

void add_target_json(JsonWriter& j, const pitch::TargetSet& set, int index) {
    if (index < 0) {
        j.key("target").null().key("target_name").null();
        return;
    }
    j.key("target").value(target_text_of(set, index)).key("target_name").value(target_name_of(set, index));
}

// Meant, nearest and between, beside the judged target.
void add_judgement_json(JsonWriter& j, const pitch::TargetSet& set, const pitch::NoteJudgement& g, bool intervals) {
    j.key("meant");
    // A target as the item's own "target" names it: between two voices in the octave it was matched at ("5/2").
    auto ratio = [&](int index, int octaves) {
        return intervals ? target_text_at(set, index, octaves) : target_text_of(set, index);
    };
    if (g.meant_index >= 0)
        j.value(ratio(g.meant_index, g.meant_octaves));
    else
        j.null();
    j.key("nearest").value(ratio(static_cast<int>(g.nearest.index), g.nearest.octaves));
    j.key("nearest_octaves").value(g.nearest.octaves).key("nearest_dev_cents").value(g.nearest.dev_cents, 3);
    j.key("between_targets").value(g.between).key("nearer_other").value(g.nearer_other);
    j.key("unsure").value(g.unsure());
    j.key("unsure_cents");
    if (std::isfinite(g.unsure_cents))
        j.value(g.unsure_cents, 3);
    else
        j.null();
    j.key("unsure_heard");
    if (std::isfinite(g.unsure_heard))
        j.value(g.unsure_heard, 3);
    else
        j.null();
    j.key("remark").value(judgement_words(g, set, intervals));
}

void add_summary_json(JsonWriter& j, const pitch::TargetSet& set, const std::vector<pitch::TargetSummary>& rows,
                      bool dyads) {
    j.key("summary").begin_array();
    for (const auto& r : rows) {
        // Named as the notes' own lines name their target, in the octave the row's notes were matched at.
        // "target" and "target_octaves" as each note's or interval's own ("3/2" and 1 for a note; "5/2" and 1 for
        // an interval); "text" as analyze prints the row ("3/2 +1oct averages ...").
        const std::string ratio = target_words_at(set, r.target_index, r.target_octaves, dyads);
        j.begin_object().key("target");
        j.value(dyads ? target_text_at(set, r.target_index, r.target_octaves) : target_text_of(set, r.target_index));
        j.key("target_name").value(target_name_words_at(set, r.target_index, r.target_octaves, dyads));
        j.key("target_octaves").value(r.target_octaves);
        j.key("count").value(r.count).key("mean_dev_cents").value(r.mean_dev_cents, 3);
        j.key("spread_cents").value(r.spread_cents, 3).key("mean_abs_dev_cents").value(r.mean_abs_dev_cents, 3);
        j.key("text").value(summary_words(r, ratio, dyads)).end_object();
    }
    j.end_array();
}

// Steady voices the drone removal hid on the drone's partials (their pitch is the partial's, not measured).
void add_on_partials_json(JsonWriter& j, const pitch::TargetSet& set, const std::vector<pitch::PartialVoice>& list,
                          double root_hz, bool intervals) {
    j.key("on_drone_partials").begin_array();
    for (const pitch::PartialVoice& v : list) {
        j.begin_object().key("start_s").value(v.start_s, 4).key("end_s").value(v.end_s, 4);
        j.key("partial").value(v.partial).key("f_hz").value(v.f_hz, 4);
        j.key("rise_db").value(v.rise_db, 1).key("partial_rise_db").value(v.partial_rise_db, 1);
        j.key("text").value(on_partial_words(v, set, root_hz, intervals)).end_object();
    }
    j.end_array();
}

std::string one_voice_json(const std::string& file, const pitch::TargetSet& set, const OneVoiceAnalysis& a) {
    const auto& notes = a.notes;
    JsonWriter j;
    j.begin_object().key("file").value(file).key("sample_rate").value(a.info.sample_rate_hz, 3);
    j.key("duration_s").value(a.info.dur_s(), 3).key("voices").value(1);
    j.key("root_hz").value(a.root_hz, 4);
    if (a.root_given)
        j.key("root_confidence").null();
    else
        j.key("root_confidence").value(a.root.confidence, 3);
    j.key("root_source").value(a.root_given ? "given" : "detected");
    if (a.drone_hz > 0.0)
        j.key("drone_hz").value(a.drone_hz, 4);
    else
        j.key("drone_hz").null();
    j.key("targets").value(set.id).key("hop_s").value(a.hop_s, 7);
    j.key("clipped_samples").value(static_cast<std::int64_t>(a.facts.clipped_samples));
    j.key("notes").begin_array();
    for (std::size_t i = 0; i < notes.size(); ++i) {
        const pitch::NoteResult& n = notes[i];
        j.begin_object().key("start_s").value(n.start_s, 4).key("end_s").value(n.end_s, 4);
        j.key("f0_hz").value(n.centre_f0_hz, 4).key("ratio").value(n.ratio, 6);
        add_target_json(j, set, n.target_index);
        j.key("target_octaves").value(n.target_octaves);
        j.key("dev_cents").value(n.dev_cents, 3).key("spread_cents").value(n.spread_cents, 3);
        add_judgement_json(j, set, a.judged[i], false);
        j.key("settle_s").value(n.settle_s, 3).key("beat_hz").value(n.beat_hz, 3);
        j.key("beat_in_tune_hz").value(n.beat_in_tune_hz, 3);
        if (n.partial_root > 0)
            j.key("partial_root").value(n.partial_root).key("partial_voice").value(n.partial_voice);
        else
            j.key("partial_root").null().key("partial_voice").null();
        j.key("own_partials");
        if (n.own_partial_root > 0)
            j.begin_array().value(n.own_partial_root).value(n.own_partial_voice).end_array();
        else
            j.null();
        j.key("vibrato_hz").value(n.vibrato ? n.vibrato_rate_hz : 0.0, 2);
        j.key("vibrato_cents").value(n.vibrato ? n.vibrato_depth_cents : 0.0, 2);
        j.key("confidence").value(n.confidence, 3);
        j.key("frames").value(n.frames).key("clipped").value(a.notes_clipped[i] > 0).end_object();
    }
    j.end_array();
    add_summary_json(j, set, a.summary, false);
    add_on_partials_json(j, set, a.on_partials, a.root_hz, false);
    j.end_object();
    return j.str();
}

std::string one_voice_csv(const pitch::TargetSet& set, const OneVoiceAnalysis& a) {
    std::string out =
        "start_s,end_s,f0_hz,ratio,target,target_name,dev_cents,spread_cents,settle_s,beat_hz,partial_root,partial_"
        "voice,beat_in_tune_hz,remark\n";
    auto whole = [](int v) { return v > 0 ? std::to_string(v) : std::string(); };
    for (std::size_t i = 0; i < a.notes.size(); ++i) {
        const auto& n = a.notes[i];
        // The remark as the text and JSON give it: why a note has no target or deviation (between targets, unsure),
        // or what else was meant.
        const std::string remark = i < a.judged.size() ? judgement_words(a.judged[i], set, false) : std::string();
        out += num(n.start_s, 4) + "," + num(n.end_s, 4) + "," + num(n.centre_f0_hz, 4) + "," + num(n.ratio, 6) + "," +
               csv_field(target_text_of(set, n.target_index)) + "," + csv_field(target_name_of(set, n.target_index)) +
               "," + num(n.dev_cents, 3) + "," + num(n.spread_cents, 3) + "," + num(n.settle_s, 3) + "," +
               num(n.beat_hz, 3) + "," + whole(n.partial_root) + "," + whole(n.partial_voice) + "," +
               num(n.beat_in_tune_hz, 3) + "," + csv_field(remark) + "\n";
    }
    return out;
}

// ---------------------------------------------------------------------------
// Two voices
// ---------------------------------------------------------------------------

namespace {
const char* beat_source_name(pitch::BeatSource s) {
    switch (s) {
        case pitch::BeatSource::frequency_difference: return "frequency_difference";
        case pitch::BeatSource::envelope: return "envelope";
        case pitch::BeatSource::slower_than_history: return "slower_than_history";
        case pitch::BeatSource::none: break;
    }
    return "none";
}
}  // namespace

std::string two_voice_json(const std::string& file, const pitch::TargetSet& set, const TwoVoiceAnalysis& a) {
    JsonWriter j;
    j.begin_object().key("file").value(file).key("sample_rate").value(a.info.sample_rate_hz, 3);
    j.key("duration_s").value(a.info.dur_s(), 3).key("voices").value(2);
    j.key("targets").value(set.id).key("hop_s").value(a.hop_s, 7);
    j.key("clipped_samples").value(static_cast<std::int64_t>(a.facts.clipped_samples));
    if (a.drone_hz > 0.0)
        j.key("drone_hz").value(a.drone_hz, 4);
    else
        j.key("drone_hz").null();
    j.key("intervals").begin_array();
    for (std::size_t k = 0; k < a.dyads.size(); ++k) {
        const pitch::DyadResult& d = a.dyads[k];
        j.begin_object().key("start_s").value(d.start_s, 4).key("end_s").value(d.end_s, 4);
        j.key("f_low_hz").value(d.f_low_hz, 4).key("f_high_hz").value(d.f_high_hz, 4);
        j.key("interval_cents").value(d.interval_cents, 3).key("ratio").value(d.f_high_hz / d.f_low_hz, 6);
        // The interval's target in the octave it was matched at, as `listen --voices 2` names it.
        if (d.target_index < 0)
            j.key("target").null().key("target_name").null();
        else
            j.key("target")
                .value(target_text_at(set, d.target_index, d.target_octaves))
                .key("target_name")
                .value(target_name_at(set, d.target_index, d.target_octaves));
        j.key("target_octaves").value(d.target_octaves);
        j.key("dev_cents").value(d.dev_cents, 3).key("spread_cents").value(d.spread_cents, 3);
        add_judgement_json(j, set, a.judged[k], true);
        j.key("partial_low").value(d.partial_low).key("partial_high").value(d.partial_high);
        j.key("predicted_beat_hz").value(d.predicted_beat_hz, 3).key("measured_beat_hz").value(d.measured_beat_hz, 3);
        j.key("beat_source").value(beat_source_name(d.beat_source));
        j.key("clipped").value(d.clipped_frames > 0).end_object();
    }
    j.end_array();
    add_summary_json(j, set, a.summary, true);
    add_on_partials_json(j, set, a.on_partials, a.drone_hz, true);
    j.end_object();
    return j.str();
}

std::string two_voice_csv(const pitch::TargetSet& set, const TwoVoiceAnalysis& a) {
    std::string out =
        "start_s,end_s,f_low_hz,f_high_hz,interval_cents,target,target_name,dev_cents,spread_cents,predicted_beat_hz,"
        "measured_beat_hz,remark\n";
    for (std::size_t i = 0; i < a.dyads.size(); ++i) {
        const auto& d = a.dyads[i];
        const std::string remark = i < a.judged.size() ? judgement_words(a.judged[i], set, true) : std::string();
        out += num(d.start_s, 4) + "," + num(d.end_s, 4) + "," + num(d.f_low_hz, 4) + "," + num(d.f_high_hz, 4) + "," +
               num(d.interval_cents, 3) + "," + csv_field(target_text_at(set, d.target_index, d.target_octaves)) + "," +
               csv_field(target_name_at(set, d.target_index, d.target_octaves)) + "," + num(d.dev_cents, 3) + "," +
               num(d.spread_cents, 3) + "," + num(d.predicted_beat_hz, 3) + "," + num(d.measured_beat_hz, 3) + "," +
               csv_field(remark) + "\n";
    }
    return out;
}

}  // namespace beatless::ui
