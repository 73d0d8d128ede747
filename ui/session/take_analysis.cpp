// Take analysis (take_analysis.h).
#include "ui/session/take_analysis.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/decimator.h"
#include "pitch/dsp/drone_comb.h"
#include "pitch/dsp/signal_facts.h"
#include "pitch/dsp/yin.h"
#include "pitch/measure/note_end.h"
#include "pitch/measure/two_voice.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/notes.h"
#include "ui/session/drill_files.h"
#include "ui/session/take_file.h"
#include "ui/session/target_files.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <filesystem>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

constexpr std::size_t kBlockFrames = kAnalysisBlockFrames;
// Tracker hop for notes: 10 ms still samples a 10 Hz vibrato ten times a
// cycle, and halves the tracker's share of the time (`track` keeps 5 ms).
constexpr double kNoteHopS = 0.01;
constexpr double kEndFrameS = 0.004;  // level frames for the notes' ends
// The notes' default floor: a semitone under the drone's root, within 41 Hz (pitch::kFileLowestHz, a double bass's
// low E) .. 55 Hz. YIN's window holds the longest period searched (24.4 ms at 41 Hz, 18.2 ms at 55 Hz), so a floor
// lower than the take needs finds every onset later and moves the whole-cycle vibrato centre with it.
constexpr double kNoteFloorHz = 55.0;
double default_floor_hz(double root_hz) {
    return root_hz > 0.0 ? std::clamp(root_hz * std::exp2(-1.0 / 12.0), pitch::kFileLowestHz, kNoteFloorHz)
                         : pitch::kFileLowestHz;
}

void check_sound(const pitch::SignalFacts& f, const std::string& path) {
    if (!(f.loudest_dbfs >= kSilenceDbfs))
        throw Error(path + ": silent (no sound above " + pitch::format_trimmed(kSilenceDbfs, 0) +
                    " dBFS); nothing to analyze");
}

// Reports progress at most every 1/200 of the job.
class Ticker {
public:
    Ticker(const ProgressFn& fn, double len_frames, int passes)
        : fn_(fn), len_(std::max(1.0, len_frames)), passes_(passes) {}
    void at(int pass, std::int64_t pos, const char* stage) {
        if (!fn_) return;
        const double f = std::min(1.0, (pass + static_cast<double>(pos) / len_) / passes_);
        if (f - last_ < 0.005 && f < 1.0) return;
        last_ = f;
        fn_(f, stage);
    }

private:
    const ProgressFn& fn_;
    double len_;
    int passes_;
    double last_ = -1.0;
};

pitch::RootEstimate detect_drone(audio::SoundReader& reader, const AnalysisRequest& req, Ticker& tick,
                                 double& min_confidence) {
    // The detector reads nothing above 8 kHz (RootDetectConfig::max_freq_hz),
    // so it runs at the lowest integer fraction of the rate that keeps the
    // decimator's passband (0.4 of the new rate) above that: half for 44.1
    // and 48 kHz, which halves its FFTs.
    const double rate = reader.info().sample_rate_hz;
    const auto factor = static_cast<std::size_t>(std::max(1.0, std::floor(rate / 20000.0)));
    pitch::RootDetectConfig rc;
    rc.sample_rate_hz = rate / static_cast<double>(factor);
    rc.silence_dbfs = kSilenceDbfs;
    pitch::RootDetector rd(rc);
    pitch::StreamDecimator dec(factor, kBlockFrames);
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        rd.push(factor > 1 ? dec.push(block) : block);
        tick.at(0, reader.position_frames(), "finding the root");
    }
    min_confidence = rc.min_confidence;
    const pitch::RootEstimate e = rd.estimate();
    if (e.status == pitch::RootStatus::no_sound)
        throw Error(req.path + ": silent (no sound above " + pitch::format_trimmed(kSilenceDbfs, 0) +
                    " dBFS); nothing to analyze");
    return e;
}

pitch::RootEstimate find_drone(audio::SoundReader& reader, const AnalysisRequest& req, Ticker& tick) {
    double min_confidence = 0.0;
    const pitch::RootEstimate e = detect_drone(reader, req, tick, min_confidence);
    if (!e.found() && !req.root_hz)
        throw Error(req.path + ": no steady drone or pedal tone found (best candidate " +
                    pitch::format_trimmed(e.root_hz, 2) + " Hz, confidence " + pitch::format_trimmed(e.confidence, 2) +
                    " below " + pitch::format_trimmed(min_confidence, 2) + "); give --root NOTE|HZ");
    return e;
}

// A note moved to the target it is judged against (pitch/measure/intent.h): target, deviation and the audible pair.
void apply(const pitch::NoteJudgement& j, const pitch::TargetSet& set, double root_hz, const pitch::AudibleRange& range,
           pitch::NoteResult& n) {
    n.target_index = j.judged_index();
    n.target_octaves = j.judged_octaves();
    n.target_cents = j.judged_target_cents();
    n.dev_cents = j.judged_dev_cents();
    n.partial_root = n.partial_voice = n.own_partial_root = n.own_partial_voice = -1;
    n.beat_hz = n.beat_in_tune_hz = NAN;
    if (n.target_index < 0) return;
    const pitch::Interval& iv = set.targets[static_cast<std::size_t>(n.target_index)].interval;
    if (iv.is_ratio()) {
        const pitch::Ratio own = pitch::beating_ratio(iv, n.target_octaves);
        n.own_partial_root = static_cast<int>(std::min<std::int64_t>(own.num, 1 << 30));
        n.own_partial_voice = static_cast<int>(std::min<std::int64_t>(own.den, 1 << 30));
    }
    const pitch::AudiblePair heard =
        pitch::audible_pair_of_target(root_hz, n.centre_f0_hz, iv, n.target_octaves, n.target_cents, range);
    if (heard.found) {
        n.partial_root = heard.partial_a;
        n.partial_voice = heard.partial_b;
        n.beat_hz = heard.beat_hz;
        n.beat_in_tune_hz = heard.beat_at_target_hz;
    }
}

void apply(const pitch::NoteJudgement& j, const pitch::TargetSet& set, const pitch::AudibleRange& range,
           pitch::DyadResult& d) {
    d.target_index = j.judged_index();
    d.target_octaves = j.judged_octaves();
    d.target_cents = j.judged_target_cents();
    d.dev_cents = j.judged_dev_cents();
    d.partial_low = d.partial_high = -1;
    d.predicted_beat_hz = NAN;
    if (d.target_index < 0) return;
    const pitch::Interval& iv = set.targets[static_cast<std::size_t>(d.target_index)].interval;
    const pitch::AudiblePair heard =
        pitch::audible_pair_of_target(d.f_low_hz, d.f_high_hz, iv, d.target_octaves, d.target_cents, range);
    if (heard.found) {
        d.partial_low = heard.partial_a;
        d.partial_high = heard.partial_b;
        d.predicted_beat_hz = heard.beat_hz;
    }
}

// Judges every note (or dyad) against what was meant, moves it to that target, and sums them per target.
template <class Item, class CentsOf, class Apply>
void judge(const AnalysisRequest& req, std::vector<Item>& items, CentsOf cents_of, Apply apply_to,
           std::vector<pitch::NoteJudgement>& judged, std::vector<pitch::TargetSummary>& summary) {
    std::vector<double> c;
    c.reserve(items.size());
    for (const Item& it : items) c.push_back(cents_of(it));
    judged = pitch::judge_notes(req.targets, c, req.expected, req.intent);
    pitch::NoteSummary sum(req.targets);
    for (std::size_t i = 0; i < items.size(); ++i) {
        if constexpr (requires { items[i].dropout_bias_cents; })
            pitch::judge_dropouts(judged[i], items[i].dropout_bias_cents, items[i].heard_share, req.intent);
        apply_to(judged[i], items[i]);
        sum.add(items[i].target_index, items[i].target_octaves, items[i].dev_cents);
    }
    summary = sum.rows();
}

void fill_heard(HeardLevels& h, const pitch::SignalFacts& f, const pitch::LevelSpread& spread) {
    h.loudest_dbfs = f.loudest_dbfs;
    h.floor_dbfs = spread.percentile_dbfs(0.1);
    h.snr_db = spread.snr_db();
}

// The voice against a known root (its drone combed out when one was found): the second pass of one-voice analysis.
void track_voice(audio::SoundReader& reader, const AnalysisRequest& req, Ticker& tick, int pass, OneVoiceAnalysis& out,
                 bool comb_drone = true);
void find_on_partials(audio::SoundReader& reader, const pitch::PartialLevels& levels, OneVoiceAnalysis& out);

}  // namespace

OneVoiceAnalysis analyze_one_voice(const AnalysisRequest& req, const ProgressFn& progress) {
    audio::SoundReader reader(req.path, req.channel, kAnalysisBlockFrames);
    return analyze_one_voice(reader, req, progress);
}

TwoVoiceAnalysis analyze_two_voices(const AnalysisRequest& req, const ProgressFn& progress) {
    audio::SoundReader reader(req.path, req.channel, kAnalysisBlockFrames);
    return analyze_two_voices(reader, req, progress);
}

OneVoiceAnalysis analyze_one_voice(audio::SoundReader& reader, const AnalysisRequest& req, const ProgressFn& progress) {
    OneVoiceAnalysis out;
    out.info = reader.info();
    Ticker tick(progress, static_cast<double>(out.info.len_frames), 2);
    out.root_given = req.root_hz.has_value();
    out.root = find_drone(reader, req, tick);
    reader.rewind();  // the second pass reads the file again from its start
    out.root_hz = req.root_hz ? *req.root_hz : out.root.root_hz;
    track_voice(reader, req, tick, 1, out);
    // A take of one steady voice and no drone, its root given: the detector takes the voice for a drone and the comb
    // removes all of it. When the comb left no note, the take is tracked again without it and kept if that finds any.
    if (out.notes.empty() && out.drone_hz > 0.0 && req.root_hz) {
        OneVoiceAnalysis plain;
        plain.info = out.info;
        plain.root_given = true;
        plain.root = out.root;
        plain.root_hz = out.root_hz;
        reader.rewind();
        track_voice(reader, req, tick, 1, plain, false);
        if (!plain.notes.empty()) out = std::move(plain);
    }
    const pitch::AudibleRange range = pitch::SegmentConfig{}.audible;
    judge(
        req, out.notes, [](const pitch::NoteResult& n) { return n.cents_above_root; },
        [&](const pitch::NoteJudgement& j, pitch::NoteResult& n) { apply(j, req.targets, out.root_hz, range, n); },
        out.judged, out.summary);
    return out;
}

namespace {

void track_voice(audio::SoundReader& reader, const AnalysisRequest& req, Ticker& tick, int pass, OneVoiceAnalysis& out,
                 bool comb_drone) {
    const double rate = out.info.sample_rate_hz;
    // The drone's removal: the comb for the tracker; with feedback (req.comb_feedback > 0) also the feedforward comb,
    // with no echoes, for the levels that place each note's end and find voices hidden on the drone's partials.
    std::optional<pitch::DroneComb> comb, plain_comb;
    if (comb_drone && out.root.found() && out.root.root_hz >= 20.0 && out.root.root_hz <= rate / 8.0) {
        out.drone_hz = out.root.root_hz;
        comb.emplace(
            pitch::DroneCombConfig{.sample_rate_hz = rate, .root_hz = out.drone_hz, .feedback = req.comb_feedback});
        if (req.comb_feedback > 0.0)
            plain_comb.emplace(pitch::DroneCombConfig{.sample_rate_hz = rate, .root_hz = out.drone_hz});
    }

    pitch::YinConfig yc;
    yc.sample_rate_hz = rate;
    yc.silence_dbfs = kSilenceDbfs;
    yc.max_block_len_samples = kBlockFrames;
    yc.hop_s = kNoteHopS;
    yc.f_min_hz = req.lowest_hz ? *req.lowest_hz : default_floor_hz(out.root_hz);
    yc.span_s = std::max(yc.span_s, pitch::YinTracker::min_span_s(yc));
    pitch::YinTracker yin(yc);
    out.hop_s = yin.hop_s();
    pitch::SegmentConfig sc;
    sc.root_hz = out.root_hz;
    sc.hop_s = out.hop_s;
    pitch::NoteSegmenter seg(sc, req.targets);
    pitch::LevelSpread spread;
    std::vector<float> filtered(kBlockFrames), plain(plain_comb ? kBlockFrames : 0);
    std::optional<pitch::PartialLevels> levels;
    if (comb) levels.emplace(pitch::PartialVoiceConfig{.sample_rate_hz = rate, .drone_hz = out.drone_hz});
    pitch::LevelEnvelope ends(rate, kEndFrameS);  // the feedforward comb's level, for the notes' ends
    pitch::PitchFrame frame;
    pitch::NoteResult note;
    auto clips = std::make_unique<pitch::ClipHistory>();
    // A frame hears half the tracker's span on each side of its time.
    const double reach_s = 0.5 * yc.span_s;
    auto keep = [&](const pitch::NoteResult& n) {
        out.notes.push_back(n);
        out.notes_clipped.push_back(clips->between(n.start_s - reach_s, n.end_s + reach_s, rate));
    };
    // With feedback, each note's end from the feedforward comb's level, once the level after it is known (or at the
    // file's end): the tracker hears the comb's echoes ring on for 40-70 ms at g = 0.5.
    std::size_t ends_placed = 0;
    auto place_ends = [&](bool all) {
        for (; ends_placed < out.notes.size(); ++ends_placed) {
            pitch::NoteResult& n = out.notes[ends_placed];
            if (!all && ends.time_s() < n.end_s + pitch::LevelEnvelope::kAfterS) break;
            n.end_s = ends.end_before(n.start_s, n.end_s, 1.0 / out.drone_hz);
        }
    };
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        const std::int64_t first = reader.position_frames() - static_cast<std::int64_t>(block.size());
        const std::int64_t clipped_before = out.facts.clipped_samples;
        pitch::observe(out.facts, block, first, rate);
        clips->add(first, block.size(), out.facts.clipped_samples - clipped_before);
        if (comb) {
            const std::span<float> y(filtered.data(), block.size());
            comb->process(block, y);
            const std::span<float> z(plain_comb ? plain.data() : filtered.data(), block.size());
            if (plain_comb) {
                plain_comb->process(block, z);
                ends.push(z);
            }
            levels->push(block, z);
            yin.push(y);
            spread.add(y);
        } else {
            yin.push(block);
            spread.add(block);
        }
        while (yin.pull(frame)) {
            if (req.keep_trace) {
                const bool v = frame.voiced() && frame.confidence >= sc.min_confidence;
                out.trace.push(frame.t_s, v ? 1200.0 * std::log2(frame.f0_hz / out.root_hz) : 0.0, v);
            }
            if (seg.push(frame, note)) keep(note);
        }
        if (plain_comb) place_ends(false);
        tick.at(pass, reader.position_frames(), "tracking notes");
    }
    if (seg.finish(note)) keep(note);
    if (plain_comb) place_ends(true);
    check_sound(out.facts, req.path);
    out.short_notes_dropped = seg.short_notes_dropped();
    fill_heard(out.heard, out.facts, spread);
    if (levels) find_on_partials(reader, *levels, out);
}

// Voices the comb hid on the drone's partials: the stretches PartialLevels found, each named from its samples and a
// stretch of drone alone beside it (a third read of the file, only when there are candidates).
void find_on_partials(audio::SoundReader& reader, const pitch::PartialLevels& levels, OneVoiceAnalysis& out) {
    constexpr double kMargin_s = 0.05, kLook_s = 1.0, kAlone_s = 0.15;
    std::vector<pitch::TimeSpan> busy;
    for (const auto& n : out.notes) busy.push_back({n.start_s - kMargin_s, n.end_s + kMargin_s});
    std::vector<pitch::PartialVoice> cands = levels.candidates(busy);
    if (cands.size() > 256) cands.resize(256);  // a pathological file: the first 256 are looked at
    struct Look {
        pitch::TimeSpan during, alone;
        std::vector<float> a, b;
    };
    std::vector<Look> looks;
    std::vector<pitch::PartialVoice> kept;
    for (const pitch::PartialVoice& c : cands) {
        const double mid = 0.5 * (c.start_s + c.end_s);
        Look k;
        k.during = {std::max(c.start_s + 0.05, mid - 0.5 * kLook_s), std::min(c.end_s - 0.05, mid + 0.5 * kLook_s)};
        // Drone alone: the nearest 0.15 s before or after, within 5 s.
        bool found = false;
        for (double d = 0.02; d <= 5.0 && !found; d += 0.02) {
            if (levels.drone_alone(c.start_s - d - kAlone_s, c.start_s - d, busy)) {
                k.alone = {c.start_s - d - kAlone_s, c.start_s - d};
                found = true;
            } else if (levels.drone_alone(c.end_s + d, c.end_s + d + kAlone_s, busy)) {
                k.alone = {c.end_s + d, c.end_s + d + kAlone_s};
                found = true;
            }
        }
        if (!found) continue;
        looks.push_back(std::move(k));
        kept.push_back(c);
    }
    if (looks.empty()) return;
    const double rate = out.info.sample_rate_hz;
    reader.rewind();
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        const std::int64_t first = reader.position_frames() - static_cast<std::int64_t>(block.size());
        for (Look& k : looks)
            for (auto [span, buf] : {std::pair{k.during, &k.a}, std::pair{k.alone, &k.b}}) {
                const auto s0 = static_cast<std::int64_t>(span.start_s * rate);
                const auto s1 = static_cast<std::int64_t>(span.end_s * rate);
                for (std::int64_t i = std::max(first, s0);
                     i < std::min(first + static_cast<std::int64_t>(block.size()), s1); ++i)
                    buf->push_back(block[static_cast<std::size_t>(i - first)]);
            }
    }
    const pitch::PartialVoiceConfig cfg{.sample_rate_hz = rate, .drone_hz = out.drone_hz};
    for (std::size_t i = 0; i < looks.size(); ++i)
        if (pitch::name_partial(kept[i], looks[i].a, looks[i].b, cfg)) out.on_partials.push_back(kept[i]);
}

// A held note of the voice over the drone as a dyad of the two.
pitch::DyadResult dyad_of(const pitch::NoteResult& n, double drone_hz) {
    pitch::DyadResult d;
    d.start_s = n.start_s;
    d.end_s = n.end_s;
    d.frames = d.measured_frames = n.frames;
    d.f_low_hz = std::min(drone_hz, n.centre_f0_hz);
    d.f_high_hz = std::max(drone_hz, n.centre_f0_hz);
    d.interval_cents = n.cents_above_root;
    d.spread_cents = n.spread_cents;
    d.target_index = n.target_index;
    d.target_octaves = n.target_octaves;
    d.target_cents = n.target_cents;
    d.dev_cents = n.dev_cents;
    d.partial_low = n.partial_root;
    d.partial_high = n.partial_voice;
    d.predicted_beat_hz = n.beat_hz;
    d.truncated = n.truncated;
    return d;
}

}  // namespace

TwoVoiceAnalysis analyze_two_voices(audio::SoundReader& reader, const AnalysisRequest& req,
                                    const ProgressFn& progress) {
    TwoVoiceAnalysis out;
    out.info = reader.info();
    const double rate = out.info.sample_rate_hz;
    Ticker tick(progress, static_cast<double>(out.info.len_frames), 2);
    // A steady drone is one of the two voices: its partials are combed out, never taken for the other voice.
    double min_confidence = 0.0;
    const pitch::RootEstimate drone = detect_drone(reader, req, tick, min_confidence);
    reader.rewind();
    if (drone.found() && drone.root_hz >= 20.0 && drone.root_hz <= rate / 8.0) {
        OneVoiceAnalysis one;
        one.info = out.info;
        one.root = drone;
        one.root_hz = drone.root_hz;
        track_voice(reader, req, tick, 1, one);
        out.drone_hz = one.drone_hz;
        out.on_partials = one.on_partials;
        out.hop_s = one.hop_s;
        out.facts = one.facts;
        out.heard = one.heard;
        out.ref_hz = one.root_hz;
        if (req.keep_trace)
            for (std::size_t i = 0; i < one.trace.size(); ++i) {  // the drone is the low voice, all along
                out.low_trace.push(one.trace[i].t_s, 1200.0 * std::log2(one.drone_hz / one.root_hz), true);
                out.high_trace.push(one.trace[i].t_s, one.trace[i].mean_cents, one.trace[i].frames > 0);
            }
        out.trace = std::move(one.trace);
        out.short_dyads_dropped = one.short_notes_dropped;
        const pitch::AudibleRange range = pitch::SegmentConfig{}.audible;
        judge(
            req, one.notes, [](const pitch::NoteResult& n) { return n.cents_above_root; },
            [&](const pitch::NoteJudgement& j, pitch::NoteResult& n) { apply(j, req.targets, one.root_hz, range, n); },
            out.judged, out.summary);
        for (std::size_t i = 0; i < one.notes.size(); ++i) {
            out.dyads.push_back(dyad_of(one.notes[i], one.drone_hz));
            out.dyads.back().clipped_frames = one.notes_clipped[i] > 0 ? 1 : 0;
        }
        return out;
    }
    out.ref_hz = req.root_hz.value_or(55.0);
    pitch::TwoVoiceConfig tc;
    tc.sample_rate_hz = rate;
    tc.silence_dbfs = kSilenceDbfs;
    tc.max_block_len_samples = kBlockFrames;
    pitch::TwoVoiceTracker tv(tc, req.targets);
    out.hop_s = static_cast<double>(tv.hop_len_samples()) / rate;
    pitch::DyadSegmentConfig dc;
    dc.hop_s = out.hop_s;
    dc.edge_s = 0.5 * static_cast<double>(tv.window_len_samples()) / rate;
    pitch::DyadSegmenter seg(dc, req.targets);
    pitch::LevelSpread spread;
    pitch::TwoVoiceFrame frame;
    pitch::DyadResult dyad;
    auto keep = [&](const pitch::DyadResult& d) { out.dyads.push_back(d); };
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        pitch::observe(out.facts, block, reader.position_frames() - static_cast<std::int64_t>(block.size()), rate);
        spread.add(block);
        tv.push(block);
        while (tv.pull(frame)) {
            if (req.keep_trace) {
                const bool v = frame.voices == 2 && frame.confidence >= dc.min_confidence;
                out.trace.push(frame.t_s, v ? frame.interval_cents : 0.0, v);
                out.low_trace.push(frame.t_s, v ? 1200.0 * std::log2(frame.f_low_hz / out.ref_hz) : 0.0, v);
                out.high_trace.push(frame.t_s, v ? 1200.0 * std::log2(frame.f_high_hz / out.ref_hz) : 0.0, v);
            }
            if (seg.push(frame, dyad)) keep(dyad);
        }
        tick.at(1, reader.position_frames(), "tracking two voices");
    }
    if (seg.finish(dyad)) keep(dyad);
    check_sound(out.facts, req.path);
    out.short_dyads_dropped = seg.short_dyads_dropped();
    fill_heard(out.heard, out.facts, spread);
    judge(
        req, out.dyads, [](const pitch::DyadResult& d) { return d.interval_cents; },
        [&](const pitch::NoteJudgement& j, pitch::DyadResult& d) { apply(j, req.targets, dc.audible, d); }, out.judged,
        out.summary);
    return out;
}

// ---------------------------------------------------------------------------
// [SECTION] A take's context
// ---------------------------------------------------------------------------

TakeDefaults take_defaults(const std::string& audio_path) {
    TakeDefaults d;
    std::error_code ec;
    const std::filesystem::path side = take_sidecar_path(audio_path);
    if (!std::filesystem::is_regular_file(side, ec)) return d;
    const TakeInfo take = read_take_sidecar(side);
    d.found = true;
    d.targets = take.targets;
    d.a4_hz = take.a4_hz;
    if (take.root_hz > 0.0) d.root = take.root.empty() ? pitch::format_trimmed(take.root_hz, 4) : take.root;
    d.expect = take.target;
    d.voices = take.voices;
    // A hold drill sung in sequence: its targets in order (a shuffled one's order is not kept, so none is expected).
    if (d.expect.empty() && !take.drill.empty()) {
        const Drill drill = load_drill(take.drill);
        if (drill.mode == DrillMode::hold && drill.order == TargetOrder::sequence)
            for (const DrillTarget& t : drill.sequence(0))
                d.expect += (d.expect.empty() ? "" : ",") + t.target.interval.str();
    }
    return d;
}

std::vector<int> expected_targets(const std::string& list, pitch::TargetSet& set) {
    std::vector<int> out;
    pitch::for_each_part(list, ',', [&](std::string_view part) {
        const std::string_view t = pitch::trim(part);
        if (t.empty()) throw Error("--expect " + pitch::quote(list) + ": an empty item; list targets as 7/5,10/7");
        const pitch::Interval iv = pitch::parse_interval(t);
        int at = -1;
        for (std::size_t i = 0; i < set.targets.size(); ++i)
            if (std::fabs(set.targets[i].interval.cents() - iv.cents()) < 1e-6) at = static_cast<int>(i);
        if (at < 0) {
            set.targets.push_back({iv, ""});
            at = static_cast<int>(set.targets.size() - 1);
        }
        out.push_back(at);
    });
    return out;
}

// ---------------------------------------------------------------------------
// [SECTION] A take reviewed
// ---------------------------------------------------------------------------

ReviewedTake review_take(const std::string& path, const std::string& default_set, const ProgressFn& progress,
                         int voices) {
    ReviewedTake r;
    r.path = path;
    r.title = std::filesystem::path(path).filename().string();
    try {
        const TakeDefaults d = take_defaults(path);
        r.set_name = d.targets.empty() ? default_set : d.targets;
        r.set = load_target_set(r.set_name);
        if (r.set.targets.empty()) throw Error(r.set_name + ": the target set has no targets");
        r.a4_hz = d.a4_hz.value_or(pitch::kDefaultA4Hz);
        r.expect = d.expect;
        AnalysisRequest req;
        req.path = path;
        req.channel = -1;
        if (!d.root.empty()) req.root_hz = pitch::parse_root(d.root, r.a4_hz);
        req.keep_trace = true;
        if (!r.expect.empty()) req.expected = expected_targets(r.expect, r.set);
        req.targets = r.set;
        r.voices = voices == 0 ? d.voices : voices;
        if (r.voices == 2)
            r.duo = analyze_two_voices(req, progress);
        else
            r.analysis = analyze_one_voice(req, progress);
    } catch (const std::exception& e) {
        r.error = e.what();
        r.analysis = OneVoiceAnalysis();
        r.duo = TwoVoiceAnalysis();
    }
    return r;
}

}  // namespace beatless::ui
