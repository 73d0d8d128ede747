// Analysis — see analysis.h.
#include "ui/session/take_analysis.h"

#include "pitch/dsp/decimator.h"
#include "pitch/dsp/drone_comb.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/measure/two_voice.h"
#include "pitch/dsp/yin.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

constexpr std::size_t kBlockFrames = 4096;
// Tracker hop for notes: 10 ms still samples a 10 Hz vibrato ten times a
// cycle, and halves the tracker's share of the time (`track` keeps 5 ms).
constexpr double kNoteHopS = 0.01;

// Updates the facts with one block starting at sample `first`.
void observe(SignalFacts& f, std::span<const float> block, std::int64_t first, double rate_hz) {
    double ss = 0.0;
    for (std::size_t i = 0; i < block.size(); ++i) {
        const double a = std::fabs(static_cast<double>(block[i]));
        ss += a * a;
        f.peak = std::max(f.peak, a);
        if (a >= 0.999) {
            if (f.clipped_samples == 0) f.first_clip_s = static_cast<double>(first + static_cast<std::int64_t>(i)) / rate_hz;
            ++f.clipped_samples;
        }
    }
    if (!block.empty()) {
        const double rms = std::sqrt(ss / static_cast<double>(block.size()));
        f.loudest_dbfs = std::max(f.loudest_dbfs, rms > 0.0 ? 20.0 * std::log10(rms) : -INFINITY);
    }
}

// Clipped samples per block over the last ~95 s (more than a note may last),
// so each note can say whether it was clipped without keeping the file.
class ClipHistory {
public:
    void add(std::int64_t first_sample, std::size_t len, std::int64_t clipped) {
        blocks_[head_ % kLen] = {first_sample, first_sample + static_cast<std::int64_t>(len), clipped};
        ++head_;
    }
    std::int64_t between(double t0_s, double t1_s, double rate_hz) const {
        const auto a = static_cast<std::int64_t>(std::floor(t0_s * rate_hz)), b = static_cast<std::int64_t>(std::ceil(t1_s * rate_hz));
        std::int64_t n = 0;
        for (std::size_t i = 0; i < std::min(head_, kLen); ++i)
            if (blocks_[i].end > a && blocks_[i].begin < b) n += blocks_[i].clipped;
        return n;
    }

private:
    struct Block { std::int64_t begin = 0, end = 0, clipped = 0; };
    static constexpr std::size_t kLen = 1024;
    std::array<Block, kLen> blocks_{};
    std::size_t head_ = 0;
};

void check_sound(const SignalFacts& f, const std::string& path) {
    if (!(f.loudest_dbfs >= kSilenceDbfs))
        throw Error(path + ": silent (no sound above " + pitch::format_trimmed(kSilenceDbfs, 0) + " dBFS); nothing to analyze");
}

// Reports progress at most every 1/200 of the job.
class Ticker {
public:
    Ticker(const ProgressFn& fn, double len_frames, int passes) : fn_(fn), len_(std::max(1.0, len_frames)), passes_(passes) {}
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

// Streams a signal through pitch/dsp/decimator.h: output m is centred on input m * factor.
class StreamDecimator {
public:
    explicit StreamDecimator(std::size_t factor) : d_(factor), half_(d_.half_len()) {
        buf_.assign(half_, 0.0f);  // zeros before the first sample
        buf_.reserve(kBlockFrames + 2 * half_ + 1);
        out_.reserve(kBlockFrames / factor + 2);
    }
    std::span<const float> push(std::span<const float> in) {
        buf_.insert(buf_.end(), in.begin(), in.end());
        out_.clear();
        const auto f = static_cast<std::int64_t>(d_.factor()), h = static_cast<std::int64_t>(half_);
        const auto end = start_ + static_cast<std::int64_t>(buf_.size());
        for (; next_ * f + h < end; ++next_) out_.push_back(d_.at(buf_.data() + (next_ * f - h - start_)));
        const std::int64_t keep_from = next_ * f - h - start_;
        buf_.erase(buf_.begin(), buf_.begin() + keep_from);
        start_ += keep_from;
        return out_;
    }

private:
    pitch::Decimator d_;
    std::size_t half_;
    std::vector<float> buf_;
    std::vector<float> out_;
    std::int64_t start_ = -static_cast<std::int64_t>(half_);  // input index of buf_[0]
    std::int64_t next_ = 0;                                  // next output index
};

pitch::RootEstimate find_drone(const AnalysisRequest& req, Ticker& tick) {
    audio::SoundReader reader(req.path, req.channel, kBlockFrames);
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
    StreamDecimator dec(factor);
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        rd.push(factor > 1 ? dec.push(block) : block);
        tick.at(0, reader.position_frames(), "finding the root");
    }
    const pitch::RootEstimate e = rd.estimate();
    if (e.status == pitch::RootStatus::no_sound)
        throw Error(req.path + ": silent (no sound above " + pitch::format_trimmed(kSilenceDbfs, 0) + " dBFS); nothing to analyze");
    if (!e.found() && !req.root_hz)
        throw Error(req.path + ": no steady drone or pedal tone found (best candidate " + pitch::format_trimmed(e.root_hz, 2) +
                    " Hz, confidence " + pitch::format_trimmed(e.confidence, 2) + " below " +
                    pitch::format_trimmed(rc.min_confidence, 2) + "); give --root NOTE|HZ");
    return e;
}

}  // namespace

OneVoiceAnalysis analyze_one_voice(const AnalysisRequest& req, const ProgressFn& progress) {
    OneVoiceAnalysis out;
    {
        audio::SoundReader probe(req.path, req.channel, 1);
        out.info = probe.info();
    }
    const int passes = 2;
    Ticker tick(progress, static_cast<double>(out.info.len_frames), passes);
    out.root_given = req.root_hz.has_value();
    out.root = find_drone(req, tick);
    out.root_hz = req.root_hz ? *req.root_hz : out.root.root_hz;
    const double rate = out.info.sample_rate_hz;
    std::optional<pitch::DroneComb> comb;
    if (out.root.found() && out.root.root_hz >= 20.0 && out.root.root_hz <= rate / 8.0) {
        out.drone_hz = out.root.root_hz;
        comb.emplace(pitch::DroneCombConfig{.sample_rate_hz = rate, .root_hz = out.drone_hz});
    }

    audio::SoundReader reader(req.path, req.channel, kBlockFrames);
    pitch::YinConfig yc;
    yc.sample_rate_hz = rate;
    yc.silence_dbfs = kSilenceDbfs;
    yc.max_block_len_samples = kBlockFrames;
    yc.hop_s = kNoteHopS;
    if (req.lowest_hz) {
        yc.f_min_hz = *req.lowest_hz;
        yc.span_s = std::max(yc.span_s, pitch::YinTracker::min_span_s(yc));
    }
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
    auto clips = std::make_unique<ClipHistory>();
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
        observe(out.facts, block, first, rate);
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

TwoVoiceAnalysis analyze_two_voices(const AnalysisRequest& req, const ProgressFn& progress) {
    TwoVoiceAnalysis out;
    audio::SoundReader reader(req.path, req.channel, kBlockFrames);
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
        observe(out.facts, block, reader.position_frames() - static_cast<std::int64_t>(block.size()), rate);
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
