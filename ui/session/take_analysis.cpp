// Take analysis (take_analysis.h).
#include "ui/session/take_analysis.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/decimator.h"
#include "pitch/dsp/drone_comb.h"
#include "pitch/dsp/signal_facts.h"
#include "pitch/dsp/yin.h"
#include "pitch/measure/two_voice.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

constexpr std::size_t kBlockFrames = kAnalysisBlockFrames;
// Tracker hop for notes: 10 ms still samples a 10 Hz vibrato ten times a
// cycle, and halves the tracker's share of the time (`track` keeps 5 ms).
constexpr double kNoteHopS = 0.01;

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

pitch::RootEstimate find_drone(audio::SoundReader& reader, const AnalysisRequest& req, Ticker& tick) {
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
    const pitch::RootEstimate e = rd.estimate();
    if (e.status == pitch::RootStatus::no_sound)
        throw Error(req.path + ": silent (no sound above " + pitch::format_trimmed(kSilenceDbfs, 0) +
                    " dBFS); nothing to analyze");
    if (!e.found() && !req.root_hz)
        throw Error(req.path + ": no steady drone or pedal tone found (best candidate " +
                    pitch::format_trimmed(e.root_hz, 2) + " Hz, confidence " + pitch::format_trimmed(e.confidence, 2) +
                    " below " + pitch::format_trimmed(rc.min_confidence, 2) + "); give --root NOTE|HZ");
    return e;
}

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
    const int passes = 2;
    Ticker tick(progress, static_cast<double>(out.info.len_frames), passes);
    out.root_given = req.root_hz.has_value();
    out.root = find_drone(reader, req, tick);
    reader.rewind();  // the second pass reads the file again from its start
    out.root_hz = req.root_hz ? *req.root_hz : out.root.root_hz;
    const double rate = out.info.sample_rate_hz;
    std::optional<pitch::DroneComb> comb;
    if (out.root.found() && out.root.root_hz >= 20.0 && out.root.root_hz <= rate / 8.0) {
        out.drone_hz = out.root.root_hz;
        comb.emplace(pitch::DroneCombConfig{.sample_rate_hz = rate, .root_hz = out.drone_hz});
    }

    pitch::YinConfig yc;
    yc.sample_rate_hz = rate;
    yc.silence_dbfs = kSilenceDbfs;
    yc.max_block_len_samples = kBlockFrames;
    yc.hop_s = kNoteHopS;
    yc.f_min_hz = req.lowest_hz ? *req.lowest_hz : pitch::kFileLowestHz;
    yc.span_s = std::max(yc.span_s, pitch::YinTracker::min_span_s(yc));
    pitch::YinTracker yin(yc);
    out.hop_s = yin.hop_s();
    pitch::SegmentConfig sc;
    sc.root_hz = out.root_hz;
    sc.hop_s = out.hop_s;
    pitch::NoteSegmenter seg(sc, req.targets);
    pitch::NoteSummary summary(req.targets);
    std::vector<float> filtered(kBlockFrames);
    pitch::PitchFrame frame;
    pitch::NoteResult note;
    auto clips = std::make_unique<pitch::ClipHistory>();
    // A frame hears half the tracker's span on each side of its time.
    const double reach_s = 0.5 * yc.span_s;
    auto keep = [&](const pitch::NoteResult& n) {
        out.notes.push_back(n);
        out.notes_clipped.push_back(clips->between(n.start_s - reach_s, n.end_s + reach_s, rate));
        summary.add(n);
    };
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        const std::int64_t first = reader.position_frames() - static_cast<std::int64_t>(block.size());
        const std::int64_t clipped_before = out.facts.clipped_samples;
        pitch::observe(out.facts, block, first, rate);
        clips->add(first, block.size(), out.facts.clipped_samples - clipped_before);
        if (comb) {
            const std::span<float> y(filtered.data(), block.size());
            comb->process(block, y);
            yin.push(y);
        } else {
            yin.push(block);
        }
        while (yin.pull(frame)) {
            if (req.keep_trace) {
                const bool v = frame.voiced() && frame.confidence >= sc.min_confidence;
                out.trace.push(frame.t_s, v ? 1200.0 * std::log2(frame.f0_hz / out.root_hz) : 0.0, v);
            }
            if (seg.push(frame, note)) keep(note);
        }
        tick.at(passes - 1, reader.position_frames(), "tracking notes");
    }
    if (seg.finish(note)) keep(note);
    check_sound(out.facts, req.path);
    out.summary = summary.rows();
    out.short_notes_dropped = seg.short_notes_dropped();
    return out;
}

TwoVoiceAnalysis analyze_two_voices(audio::SoundReader& reader, const AnalysisRequest& req,
                                    const ProgressFn& progress) {
    TwoVoiceAnalysis out;
    out.info = reader.info();
    const double rate = out.info.sample_rate_hz;
    Ticker tick(progress, static_cast<double>(out.info.len_frames), 1);
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
    pitch::NoteSummary summary(req.targets);
    pitch::TwoVoiceFrame frame;
    pitch::DyadResult dyad;
    auto keep = [&](const pitch::DyadResult& d) {
        out.dyads.push_back(d);
        summary.add(d.target_index, d.dev_cents);
    };
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        pitch::observe(out.facts, block, reader.position_frames() - static_cast<std::int64_t>(block.size()), rate);
        tv.push(block);
        while (tv.pull(frame)) {
            if (req.keep_trace) {
                const bool v = frame.voices == 2 && frame.confidence >= dc.min_confidence;
                out.trace.push(frame.t_s, v ? frame.interval_cents : 0.0, v);
            }
            if (seg.push(frame, dyad)) keep(dyad);
        }
        tick.at(0, reader.position_frames(), "tracking two voices");
    }
    if (seg.finish(dyad)) keep(dyad);
    check_sound(out.facts, req.path);
    out.summary = summary.rows();
    out.short_dyads_dropped = seg.short_dyads_dropped();
    return out;
}

}  // namespace beatless::ui
