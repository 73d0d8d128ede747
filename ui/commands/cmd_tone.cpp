// beatless tone --root NOTE|HZ [--ratio R[,R...]] [--detune-cents C[,C...]] [--seconds S]
//               [--timbre T] --out FILE.wav
//
// Renders a drone, optionally with a second voice at a ratio above (or below)
// it (several ratios: one note each in turn, with rests between), to a WAV file: practice tracks, and test material with exactly known
// content. Fades in and out over 50 ms and never exceeds -1 dBFS.
#include "audio/soundfile.h"
#include "audio/synth.h"
#include "audio/timbre.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/notes.h"
#include "ui/commands/commands.h"
#include "ui/session/safe_file.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <memory>

namespace beatless::ui {

namespace {

struct ToneOptions {
    std::string root;
    double a4_hz = pitch::kDefaultA4Hz;
    std::vector<std::string> ratios;    // one note per ratio, in turn
    std::vector<double> detunes_cents;  // per note (or one for all)
    double rest_s = 0.3;
    double seconds = 10.0;
    std::string timbre = "round";
    std::string voice_timbre;
    double vibrato_hz = 0.0;
    double vibrato_cents = 0.0;
    double level_db = -18.0;
    double voice_db = NAN;
    double rate_hz = 48000.0;
    std::string out;
};

double db_to_gain(double db) { return std::pow(10.0, db / 20.0); }

int run_tone(const ToneOptions& o) {
    pitch::check_a4(o.a4_hz);
    (void)check_output_path(o.out);  // refuse a device, folder or missing folder before rendering
    const double root_hz = pitch::parse_root(o.root, o.a4_hz);
    if (!(o.seconds > 0.0 && o.seconds <= 3600.0))
        throw Error("--seconds " + pitch::format_trimmed(o.seconds, 3) + ": out of range (more than 0, at most 3600)");
    if (!(o.rate_hz >= audio::kMinRateHz && o.rate_hz <= audio::kMaxRateHz))
        throw Error("--rate " + pitch::format_trimmed(o.rate_hz, 1) + ": out of range (8000 to 192000 Hz)");
    if (!(o.level_db >= -80.0 && o.level_db <= -6.0))
        throw Error("--level-db " + pitch::format_trimmed(o.level_db, 1) + ": out of range (-80 to -6 dBFS)");
    if (!std::isnan(o.voice_db) && !(o.voice_db >= -80.0 && o.voice_db <= -6.0))
        throw Error("--voice-db " + pitch::format_trimmed(o.voice_db, 1) + ": out of range (-80 to -6 dBFS)");
    for (double d : o.detunes_cents)
        if (!(std::fabs(d) <= 1200.0))
            throw Error("--detune-cents " + pitch::format_trimmed(d, 3) + ": out of range (-1200 to 1200)");
    if (o.detunes_cents.size() > 1 && o.detunes_cents.size() != o.ratios.size())
        throw Error("--detune-cents: " + std::to_string(o.detunes_cents.size()) + " values for " +
                    std::to_string(o.ratios.size()) + " ratios (give one value, or one per ratio)");
    if (!(o.rest_s >= 0.0 && o.rest_s <= 10.0))
        throw Error("--rest " + pitch::format_trimmed(o.rest_s, 3) + ": out of range (0 to 10 s)");
    if (!(o.vibrato_hz >= 0.0 && o.vibrato_hz <= 15.0))
        throw Error("--vibrato-hz " + pitch::format_trimmed(o.vibrato_hz, 2) + ": out of range (0 to 15 Hz)");
    if (!(o.vibrato_cents >= 0.0 && o.vibrato_cents <= 200.0))
        throw Error("--vibrato-cents " + pitch::format_trimmed(o.vibrato_cents, 2) + ": out of range (0 to 200)");
    const audio::Timbre drone_timbre = audio::parse_timbre(o.timbre);
    const audio::Timbre voice_timbre = o.voice_timbre.empty() ? drone_timbre : audio::parse_timbre(o.voice_timbre);

    const auto len = static_cast<std::size_t>(std::llround(o.seconds * o.rate_hz));
    std::vector<float> buf(len, 0.0f);
    const double sine_peak = std::sqrt(2.0);  // unit-RMS timbres: level is the RMS in dBFS

    audio::ToneSpec drone;
    drone.f0_hz = root_hz;
    drone.partials = audio::timbre_partials(drone_timbre);
    drone.level = db_to_gain(o.level_db) * sine_peak;
    drone.dur_s = o.seconds;
    audio::render_tone_add(drone, o.rate_hz, buf);

    // The second voice: one note per ratio, sharing the time after the
    // first rest; each note fades in and out over 50 ms.
    std::string voice_text;
    const std::size_t notes = o.ratios.size();
    const double note_s =
        notes > 0 ? (o.seconds - o.rest_s * static_cast<double>(notes)) / static_cast<double>(notes) : 0.0;
    if (notes > 0 && !(note_s >= 0.2))
        throw Error("--seconds " + pitch::format_trimmed(o.seconds, 3) + ": too short for " + std::to_string(notes) +
                    " notes with rests of " + pitch::format_trimmed(o.rest_s, 3) +
                    " s (each note needs at least 0.2 s)");
    for (std::size_t i = 0; i < notes; ++i) {
        const pitch::Interval iv = pitch::parse_interval(o.ratios[i]);
        const double detune = o.detunes_cents.empty() ? 0.0 : o.detunes_cents[o.detunes_cents.size() == 1 ? 0 : i];
        const double voice_hz = root_hz * iv.value() * std::exp2(detune / 1200.0);
        if (!(voice_hz >= 20.0 && voice_hz < 0.45 * o.rate_hz))
            throw Error("--ratio " + o.ratios[i] + ": the voice would sound at " + pitch::format_trimmed(voice_hz, 2) +
                        " Hz, outside 20 Hz to 0.45 of the sample rate");
        audio::ToneSpec voice;
        voice.f0_hz = voice_hz;
        voice.partials = audio::timbre_partials(voice_timbre);
        voice.level = db_to_gain(std::isnan(o.voice_db) ? o.level_db : o.voice_db) * sine_peak;
        voice.vibrato_rate_hz = o.vibrato_hz;
        voice.vibrato_depth_cents = o.vibrato_cents;
        voice.start_s = notes == 1 ? 0.0 : o.rest_s + static_cast<double>(i) * (note_s + o.rest_s);
        voice.dur_s = notes == 1 ? o.seconds : note_s;
        audio::render_tone_add(voice, o.rate_hz, buf);
        voice_text +=
            std::string(i == 0 ? ", voice " : "; ") + iv.str() +
            (detune != 0.0 ? " " + std::string(detune > 0 ? "+" : "") + pitch::format_trimmed(detune, 3) + " c" : "") +
            " = " + pitch::format_trimmed(voice_hz, 3) + " Hz";
    }
    if (notes > 0) voice_text += " (" + std::string(audio::timbre_name(voice_timbre)) + ")";

    // Never exceed -1 dBFS: scale the whole render down if the partials add up.
    float peak = 0.0f;
    for (float v : buf) peak = std::max(peak, std::fabs(v));
    const float ceiling = static_cast<float>(db_to_gain(-1.0));
    if (peak > ceiling)
        for (float& v : buf) v *= ceiling / peak;

    SafeOutput out(o.out);
    audio::write_wav(out.temp_path(), buf, o.rate_hz, audio::SampleFormat::pcm24, o.out);
    out.commit();
    std::printf("wrote %s: %s s at %s Hz, drone %s (%s)%s\n", o.out.c_str(),
                pitch::format_trimmed(o.seconds, 3).c_str(), pitch::format_trimmed(o.rate_hz, 0).c_str(),
                root_echo(o.root, root_hz).c_str(), std::string(audio::timbre_name(drone_timbre)).c_str(),
                voice_text.c_str());
    return 0;
}

}  // namespace

void register_tone(CLI::App& app, Runner& run) {
    auto o = std::make_shared<ToneOptions>();
    CLI::App* sub =
        app.add_subcommand("tone", "Render a drone, optionally with a second voice at a ratio, to a WAV file");
    sub->add_option("--root", o->root, "Drone root as a note (A2) or in Hz (110)")->required();
    add_a4_option(*sub, o->a4_hz);
    sub->add_option("--ratio", o->ratios,
                    "Second voice at this interval above the root: 7/5, 600c, ...; several (7/5,10/7,11/8) sing one "
                    "note each in turn")
        ->delimiter(',');
    sub->add_option("--detune-cents", o->detunes_cents,
                    "Move the second voice off the ratio by this many cents (one value, or one per ratio)")
        ->delimiter(',')
        ->allow_extra_args(false);
    sub->add_option("--rest", o->rest_s, "With several ratios: silence before each note in seconds (default 0.3)");
    sub->add_option("--seconds", o->seconds, "Length in seconds (default 10)");
    sub->add_option("--timbre", o->timbre, "Drone timbre: pure, soft, round, bright, hollow (default round)");
    sub->add_option("--voice-timbre", o->voice_timbre, "Second voice timbre (default: the drone's)");
    sub->add_option("--vibrato-hz", o->vibrato_hz, "Second voice vibrato rate in Hz (0 = none)");
    sub->add_option("--vibrato-cents", o->vibrato_cents, "Second voice vibrato depth in cents (peak)");
    sub->add_option("--level-db", o->level_db, "Drone level, RMS dBFS (default -18)");
    sub->add_option("--voice-db", o->voice_db, "Second voice level, RMS dBFS (default: the drone's)");
    sub->add_option("--rate", o->rate_hz, "Sample rate in Hz (default 48000)");
    sub->add_option("--out", o->out, "Output WAV file")->required();
    sub->callback([o, &run] { run = [o] { return run_tone(*o); }; });
}

}  // namespace beatless::ui
