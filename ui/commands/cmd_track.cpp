// beatless track FILE [--format json|csv] [--hop-ms MS] [--fmin HZ] [--fmax HZ] [--channel N] [--drone ROOT|auto]
//
// The pitch track of a sound file, frame by frame, in the forms fixed in
// DESIGN.md. Streams: a two-hour file uses the memory of one block.
// --drone removes a drone at ROOT (a note or Hz; auto: found in the file by pitch/measure/root_detect.h, a first
// pass) before tracking, by the comb the analysis uses (pitch/dsp/drone_comb.h), so a drone-plus-voice file yields
// the voice; the JSON then says "drone_hz".
// --voices 2 tracks two voices in one input (pitch/measure/two_voice.h: a double stop, a duet): the JSON's "f0_hz" is
// then a list of the voices heard, lowest first ([] in silence), and the CSV has f0_low_hz and f0_high_hz.
#include "audio/soundfile.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/drone_comb.h"
#include "pitch/dsp/yin.h"
#include "pitch/dsp/yin_path.h"
#include "pitch/measure/root_detect.h"
#include "pitch/measure/two_voice.h"
#include "pitch/theory/notes.h"
#include "ui/commands/commands.h"
#include "ui/session/json.h"

#include <algorithm>
#include <cstdio>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

struct TrackOptions {
    std::string file;
    Format format = Format::json;
    double hop_ms = 5.0;
    std::optional<double> fmin_hz;  // empty: 41 Hz for one voice, the two-voice tracker's own floor for two
    double fmax_hz = 1600.0;
    std::optional<int> channel;  // 1-based; empty mixes all channels
    int voices = 1;              // 2: two voices in one input
    std::string drone;           // --drone: a root to remove ("A2", "110") or "auto"; "" = none
    double a4_hz = pitch::kDefaultA4Hz;
};

// The drone to remove: the root given, or the one found in a first pass over the file (then rewound).
double drone_root_hz(const TrackOptions& o, audio::SoundReader& reader) {
    if (o.drone != "auto") return pitch::parse_root(o.drone, o.a4_hz);
    pitch::RootDetectConfig rc;
    rc.sample_rate_hz = reader.info().sample_rate_hz;
    pitch::RootDetector rd(rc);
    for (auto block = reader.read(); !block.empty(); block = reader.read()) rd.push(block);
    reader.rewind();
    const pitch::RootEstimate e = rd.estimate();
    if (!e.found())
        throw Error(o.file + ": no steady drone found (best candidate " + pitch::format_trimmed(e.root_hz, 2) +
                    " Hz, confidence " + pitch::format_trimmed(e.confidence, 2) + "); give --drone NOTE|HZ");
    std::fprintf(stderr, "beatless: drone found in the file at %s Hz (confidence %s); removed before tracking\n",
                 pitch::format_trimmed(e.root_hz, 3).c_str(), pitch::format_trimmed(e.confidence, 2).c_str());
    return e.root_hz;
}

int run_track(const TrackOptions& o) {
    if (!(o.hop_ms >= 0.5 && o.hop_ms <= 100.0))
        throw Error("--hop-ms " + pitch::format_trimmed(o.hop_ms, 3) + ": out of range (0.5 to 100 ms)");
    if (o.channel && *o.channel < 1)
        throw Error("--channel " + std::to_string(*o.channel) + ": channels are numbered from 1");
    audio::SoundReader reader(o.file, o.channel.value_or(0) - 1);
    pitch::YinConfig cfg;
    cfg.sample_rate_hz = reader.info().sample_rate_hz;
    cfg.hop_s = o.hop_ms / 1000.0;
    cfg.f_min_hz = o.fmin_hz.value_or(pitch::kFileLowestHz);
    cfg.f_max_hz = o.fmax_hz;
    cfg.span_s = std::max(cfg.span_s, pitch::YinTracker::min_span_s(cfg));  // a low --fmin (or hop) may need more
    cfg.max_block_len_samples = 4096;
    cfg.keep_candidates = true;  // voicing and pitch are chosen along a path over the whole file (yin_path.h)
    if (o.voices != 1 && o.voices != 2) throw Error("--voices " + std::to_string(o.voices) + ": 1 or 2");
    std::optional<pitch::YinTracker> yin;
    std::optional<pitch::TwoVoiceTracker> duo;
    if (o.voices == 2) {
        pitch::TwoVoiceConfig tc;
        tc.sample_rate_hz = cfg.sample_rate_hz;
        tc.hop_s = cfg.hop_s;
        tc.f_min_hz = o.fmin_hz.value_or(tc.f_min_hz);
        tc.f_max_hz = o.fmax_hz;
        tc.max_block_len_samples = 4096;
        duo.emplace(tc, pitch::TargetSet{});
    } else {
        yin.emplace(cfg);
    }
    std::optional<pitch::DroneComb> comb;
    if (!o.drone.empty()) {
        pitch::check_a4(o.a4_hz);
        const double root_hz = drone_root_hz(o, reader);
        if (!(root_hz >= 20.0 && root_hz <= cfg.sample_rate_hz / 8.0))
            throw Error("--drone " + pitch::quote(o.drone) + ": " + pitch::format_trimmed(root_hz, 3) +
                        " Hz is outside what can be removed (20 Hz to a rate / 8)");
        comb.emplace(pitch::DroneCombConfig{.sample_rate_hz = cfg.sample_rate_hz, .root_hz = root_hz});
    }
    std::vector<float> filtered(4096);

    const bool json = o.format == Format::json;
    std::string name = o.file;
    if (json) {
        JsonWriter head;
        head.begin_object().key("file").value(name).key("sample_rate").value(cfg.sample_rate_hz, 3);
        head.key("hop_s").value(duo ? static_cast<double>(duo->hop_len_samples()) / cfg.sample_rate_hz : yin->hop_s(),
                                7);
        if (duo) head.key("voices").value(2);
        if (comb) head.key("drone_hz").value(cfg.sample_rate_hz / comb->delay_samples(), 4);
        std::printf("%s, \"frames\": [", head.str().c_str());  // the object stays open for the frames
    } else {
        std::printf(duo ? "t,f0_low_hz,f0_high_hz,confidence\n" : "t,f0_hz,confidence\n");
    }
    bool first = true;
    JsonWriter j;
    // A frame's line in the chosen form; only that one is made.
    auto put = [&](const auto& json_frame, const auto& csv_row) {
        if (json)
            std::printf("%s\n  %s", first ? "" : ",", json_frame().c_str());
        else
            std::printf("%s\n", csv_row().c_str());
        first = false;
    };
    const auto hz = [](double f) { return f > 0.0 ? pitch::format_trimmed(f, 4) : std::string(); };
    pitch::PitchFrame fr;
    pitch::TwoVoiceFrame dfr;
    // One voice: the frames wait for the file's end, where the path over all of them decides each one's voicing and
    // pitch (pitch/dsp/yin_path.h), so the babble of talkers around a performer is not read as a pitch.
    pitch::VoicingPath path(yin ? yin->hop_s() : cfg.hop_s);
    auto pull_all = [&](bool at_end) {
        while (yin && yin->pull(fr)) path.push(fr, yin->candidates());
        if (yin && at_end) path.finish();
        while (yin && path.pull(fr)) {
            put(
                [&] {
                    j.clear();
                    j.begin_object().key("t").value(fr.t_s, 4).key("f0_hz");
                    if (fr.voiced())
                        j.value(fr.f0_hz, 4);
                    else
                        j.null();
                    j.key("confidence").value(fr.confidence, 3).end_object();
                    return j.str();
                },
                [&] {
                    return pitch::format_trimmed(fr.t_s, 4) + "," + (fr.voiced() ? hz(fr.f0_hz) : "") + "," +
                           pitch::format_trimmed(fr.confidence, 3);
                });
        }
        while (duo && duo->pull(dfr)) {
            put(
                [&] {
                    j.clear();
                    j.begin_object().key("t").value(dfr.t_s, 4).key("f0_hz").begin_array();
                    for (const double f : {dfr.f_low_hz, dfr.f_high_hz})
                        if (f > 0.0) j.value(f, 4);
                    j.end_array().key("confidence").value(dfr.confidence, 3).end_object();
                    return j.str();
                },
                [&] {
                    return pitch::format_trimmed(dfr.t_s, 4) + "," + hz(dfr.f_low_hz) + "," + hz(dfr.f_high_hz) + "," +
                           pitch::format_trimmed(dfr.confidence, 3);
                });
        }
    };
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        std::span<const float> x = block;
        if (comb) {
            if (filtered.size() < block.size()) filtered.resize(block.size());
            const std::span<float> y(filtered.data(), block.size());
            comb->process(block, y);
            x = y;
        }
        if (yin) yin->push(x);
        if (duo) duo->push(x);
        pull_all(false);
    }
    pull_all(true);
    if (json) std::printf("%s]}\n", first ? "" : "\n");
    return 0;
}

}  // namespace

void register_track(CLI::App& app, Runner& run) {
    auto o = std::make_shared<TrackOptions>();
    CLI::App* sub = app.add_subcommand("track", "Pitch track of a sound file (WAV, FLAC, AIFF, Ogg) as JSON or CSV");
    sub->add_option("FILE", o->file, "Sound file")->required();
    add_format_option(*sub, o->format, {Format::json, Format::csv});
    sub->add_option("--hop-ms", o->hop_ms, "Time between frames in ms (default 5)");
    sub->add_option("--fmin", o->fmin_hz,
                    "Lowest f0 searched in Hz (default 41: a double bass's low E; with --voices 2, 60)");
    sub->add_option("--fmax", o->fmax_hz, "Highest f0 searched in Hz (default 1600)");
    sub->add_option("--channel", o->channel, "Channel to track, from 1 (default: all channels mixed)");
    sub->add_option("--drone", o->drone,
                    "Remove a drone before tracking: its root as a note or in Hz (A2, 110), or auto to find it");
    add_a4_option(*sub, o->a4_hz);
    sub->add_option("--voices", o->voices,
                    "2: two voices in one input (a double stop, a duet): f0_hz lists the voices heard, lowest first");
    sub->callback([o, &run] { run = [o] { return run_track(*o); }; });
}

}  // namespace beatless::ui
