// beatless track FILE [--format json|csv] [--hop-ms MS] [--fmin HZ] [--fmax HZ] [--channel N]
//
// The pitch track of a sound file, frame by frame, in the forms fixed in
// DESIGN.md. Streams: a two-hour file uses the memory of one block.
#include "audio/soundfile.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/yin.h"
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
    double fmin_hz = pitch::kFileLowestHz;
    double fmax_hz = 1600.0;
    std::optional<int> channel;  // 1-based; empty mixes all channels
};

int run_track(const TrackOptions& o) {
    if (!(o.hop_ms >= 0.5 && o.hop_ms <= 100.0))
        throw Error("--hop-ms " + pitch::format_trimmed(o.hop_ms, 3) + ": out of range (0.5 to 100 ms)");
    if (o.channel && *o.channel < 1)
        throw Error("--channel " + std::to_string(*o.channel) + ": channels are numbered from 1");
    audio::SoundReader reader(o.file, o.channel.value_or(0) - 1);
    pitch::YinConfig cfg;
    cfg.sample_rate_hz = reader.info().sample_rate_hz;
    cfg.hop_s = o.hop_ms / 1000.0;
    cfg.f_min_hz = o.fmin_hz;
    cfg.f_max_hz = o.fmax_hz;
    cfg.span_s = std::max(cfg.span_s, pitch::YinTracker::min_span_s(cfg));  // a low --fmin (or hop) may need more
    cfg.max_block_len_samples = 4096;
    pitch::YinTracker tracker(cfg);

    const bool json = o.format == Format::json;
    std::string name = o.file;
    if (json) {
        JsonWriter head;
        head.begin_object().key("file").value(name).key("sample_rate").value(cfg.sample_rate_hz, 3);
        head.key("hop_s").value(tracker.hop_s(), 7);
        std::printf("%s, \"frames\": [", head.str().c_str());  // the object stays open for the frames
    } else {
        std::printf("t,f0_hz,confidence\n");
    }
    bool first = true;
    pitch::PitchFrame fr;
    JsonWriter j;
    for (auto block = reader.read(); !block.empty(); block = reader.read()) {
        tracker.push(block);
        while (tracker.pull(fr)) {
            if (json) {
                j.clear();
                j.begin_object().key("t").value(fr.t_s, 4).key("f0_hz");
                if (fr.voiced())
                    j.value(fr.f0_hz, 4);
                else
                    j.null();
                j.key("confidence").value(fr.confidence, 3).end_object();
                std::printf("%s\n  %s", first ? "" : ",", j.str().c_str());
            } else {
                std::printf("%s,%s,%s\n", pitch::format_trimmed(fr.t_s, 4).c_str(),
                            fr.voiced() ? pitch::format_trimmed(fr.f0_hz, 4).c_str() : "",
                            pitch::format_trimmed(fr.confidence, 3).c_str());
            }
            first = false;
        }
    }
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
    sub->add_option("--fmin", o->fmin_hz, "Lowest f0 searched in Hz (default 41: a double bass's low E)");
    sub->add_option("--fmax", o->fmax_hz, "Highest f0 searched in Hz (default 1600)");
    sub->add_option("--channel", o->channel, "Channel to track, from 1 (default: all channels mixed)");
    sub->callback([o, &run] { run = [o] { return run_track(*o); }; });
}

}  // namespace beatless::ui
