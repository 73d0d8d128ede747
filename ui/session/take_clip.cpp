#include "ui/session/take_clip.h"

#include "audio/soundfile.h"
#include "audio/synth.h"
#include "audio/timbre.h"
#include "pitch/base/error.h"
#include "ui/session/take_file.h"

#include <algorithm>
#include <cmath>
#include <filesystem>

namespace beatless::ui {

namespace {

double rms_of(std::span<const float> x) {
    double sum = 0.0;
    for (const float v : x) sum += static_cast<double>(v) * v;
    return x.empty() ? 0.0 : std::sqrt(sum / static_cast<double>(x.size()));
}

// The take's context for its drone: the sidecar's, or (any sound file) a round drone at the analysed root.
TakeInfo drone_context(const ReviewedTake& take, bool& from_sidecar) {
    std::error_code ec;
    const auto sidecar = take_sidecar_path(take.path);
    from_sidecar = std::filesystem::exists(sidecar, ec);
    if (from_sidecar) return read_take_sidecar(sidecar);
    TakeInfo t;
    t.rate_hz = take.analysis.info.sample_rate_hz;
    t.root_hz = take.voices == 2 ? take.duo.ref_hz : take.analysis.root_hz;
    t.drone.on = true;
    return t;
}

}  // namespace

std::string_view clip_kind_words(ClipKind kind) {
    switch (kind) {
        case ClipKind::note: return "the note";
        case ClipKind::with_drone: return "the note with its drone";
        case ClipKind::then_target: return "the note, then its target";
    }
    return "";
}

NoteClip make_note_clip(const ReviewedTake& take, std::size_t note, ClipKind kind) {
    if (!take.error.empty()) throw Error(take.path + ": " + take.error);
    // The held note (one voice) or interval (two voices): its times, its target's pitch, the drone the file holds.
    struct Held {
        double start_s, end_s, target_hz, drone_hz;
    };
    const bool duo = take.voices == 2;
    if (note >= (duo ? take.duo.dyads.size() : take.analysis.notes.size()))
        throw Error(take.path + ": note " + std::to_string(note + 1) + " is not in the take");
    const Held n = [&] {
        if (duo) {
            const pitch::DyadResult& d = take.duo.dyads[note];  // the target: the upper note over the lower voice
            return Held{d.start_s, d.end_s, d.f_low_hz * std::exp2(d.target_cents / 1200.0), take.duo.drone_hz};
        }
        const pitch::NoteResult& r = take.analysis.notes[note];
        return Held{r.start_s, r.end_s, take.analysis.root_hz * std::exp2(r.target_cents / 1200.0),
                    take.analysis.drone_hz};
    }();
    if (kind == ClipKind::then_target && !std::isfinite(n.target_hz))
        throw Error("note " + std::to_string(note + 1) + " is between targets: it has no target to sound");

    audio::SoundReader reader(take.path, -1, kAnalysisBlockFrames);
    const double rate = reader.info().sample_rate_hz;
    NoteClip c;
    c.rate_hz = rate;
    const double from_s = std::max(0.0, n.start_s - kClipMarginS);
    const double to_s = std::min({reader.info().dur_s(), n.end_s + kClipMarginS, from_s + kClipMaxS});
    c.first_frame = static_cast<std::int64_t>(std::floor(from_s * rate));
    const auto last = static_cast<std::int64_t>(std::ceil(to_s * rate));
    c.note_frames = std::max<std::int64_t>(0, last - c.first_frame);
    reader.seek(c.first_frame);
    c.samples.reserve(static_cast<std::size_t>(c.note_frames));
    while (static_cast<std::int64_t>(c.samples.size()) < c.note_frames) {
        const auto block = reader.read();
        if (block.empty()) break;
        const auto take_n =
            std::min<std::size_t>(block.size(), static_cast<std::size_t>(c.note_frames) - c.samples.size());
        c.samples.insert(c.samples.end(), block.begin(), block.begin() + static_cast<std::ptrdiff_t>(take_n));
    }
    c.note_frames = static_cast<std::int64_t>(c.samples.size());
    if (c.samples.empty()) throw Error(take.path + ": the note's samples cannot be read");
    // The voice's RMS over the note itself (not the margins) sets its gain.
    const auto a = static_cast<std::size_t>(
        std::clamp<std::int64_t>(static_cast<std::int64_t>(n.start_s * rate) - c.first_frame, 0, c.note_frames - 1));
    const auto b = static_cast<std::size_t>(std::clamp<std::int64_t>(
        static_cast<std::int64_t>(n.end_s * rate) - c.first_frame, static_cast<std::int64_t>(a) + 1, c.note_frames));
    const double voice_rms = rms_of(std::span<const float>(c.samples.data() + a, b - a));
    c.voice_gain = voice_rms > 1e-9 ? 1.0 / voice_rms : 1.0;
    for (float& v : c.samples) v = static_cast<float>(v * c.voice_gain);

    if (kind == ClipKind::with_drone) {
        if (n.drone_hz > 0.0) {
            c.drone_recorded = true;  // the microphone heard it: the recording already holds it
        } else {
            bool from_sidecar = false;
            const TakeInfo t = drone_context(take, from_sidecar);
            TakeInfo at_rate = t;
            at_rate.rate_hz = rate;
            const std::vector<float> d = regenerate_drone(at_rate, c.first_frame, c.note_frames);
            // RMS 1 for the root tone, as the voice: the drone's level is the RMS of its root tone.
            const double to_unit = 1.0 / std::pow(10.0, t.drone.level_dbfs / 20.0);
            for (std::size_t i = 0; i < c.samples.size() && i < d.size(); ++i)
                c.samples[i] += static_cast<float>(d[i] * to_unit);
            c.drone_regenerated = true;
        }
    } else if (kind == ClipKind::then_target) {
        audio::ToneSpec tone;
        tone.f0_hz = n.target_hz;
        tone.partials = audio::timbre_partials(audio::Timbre::soft);
        tone.level = 1.0;
        tone.dur_s = std::clamp(n.end_s - n.start_s, 0.5, 3.0);
        std::vector<float> t(static_cast<std::size_t>(std::ceil(tone.dur_s * rate)), 0.0f);
        audio::render_tone_add(tone, rate, t);
        const std::size_t q = t.size() / 4;
        const double t_rms = rms_of(std::span<const float>(t.data() + q, t.size() - 2 * q));
        const double g = t_rms > 0.0 ? 1.0 / t_rms : 1.0;
        c.samples.resize(c.samples.size() + static_cast<std::size_t>(kClipGapS * rate), 0.0f);
        for (const float v : t) c.samples.push_back(static_cast<float>(v * g));
    }
    return c;
}

}  // namespace beatless::ui
