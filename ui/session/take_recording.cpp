// Take recording — see take_recording.h.
#include "ui/session/take_recording.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/session/safe_file.h"
#include "ui/session/take_words.h"

#include <ctime>

namespace beatless::ui {

TakeDrone take_drone_from(const std::vector<audio::DroneChange>& changes, double rate_hz) {
    TakeDrone d;
    if (changes.empty()) return d;
    const audio::DroneSettings& first = changes.front().settings;
    d.on = first.on;
    d.timbre = first.timbre;
    d.level_dbfs = first.level_dbfs;
    d.fifth = first.fifth;
    d.octave = first.octave;
    audio::DroneSettings was = first;
    for (std::size_t i = 1; i < changes.size(); ++i) {
        const audio::DroneSettings& s = changes[i].settings;
        const double t_s = static_cast<double>(changes[i].frame) / rate_hz;
        if (s.root_hz != was.root_hz) d.events.push_back({t_s, DroneEventKind::root, s.root_hz});
        if (s.on != was.on) d.events.push_back({t_s, s.on ? DroneEventKind::on : DroneEventKind::off, s.root_hz});
        was = s;
    }
    return d;
}

TakeRecording::TakeRecording(audio::Engine& engine, const std::filesystem::path& audio_path, const TakeContext& context,
                             double rate_hz, int channels, const audio::TakeRecorderConfig& limits)
    : engine_(&engine) {
    const std::filesystem::path real = check_output_path(audio_path);
    info_.audio_path = audio_path;
    info_.sidecar_path = take_sidecar_path(audio_path);
    check_output_path(info_.sidecar_path);
    info_.started = iso8601_local(std::time(nullptr));
    info_.rate_hz = rate_hz;
    info_.channels = channels;
    info_.device = context.device;
    info_.screen = context.screen;
    info_.root_hz = engine.drone().root_hz;
    info_.root = context.root.empty() ? pitch::hz_to_note(info_.root_hz, context.a4_hz).name : context.root;
    info_.a4_hz = context.a4_hz;
    info_.targets = context.targets;
    info_.target = context.target;
    info_.drill = context.drill;
    info_.voices = context.voices;
    info_.players = context.players;
    audio::TakeRecorderConfig rc = limits;
    rc.sample_rate_hz = rate_hz;
    rc.channels = channels;
    recorder_ = std::make_unique<audio::TakeRecorder>(rc, real.string(), audio_path.string());
    info_.drone = take_drone_from({{0, engine.drone()}}, rate_hz);
    write_take_sidecar(info_);  // complete = false until stop(): a take cut short is recovered on the next start
    recorder_->start();
    engine.set_tap(recorder_.get());
}

TakeRecording::~TakeRecording() { stop(); }

std::string TakeRecording::stop() {
    if (stopped_) return result_;
    stopped_ = true;
    engine_->set_tap(nullptr);
    recorder_->stop();
    const double dur_s = static_cast<double>(recorder_->written_frames()) / info_.rate_hz;
    info_.drone = take_drone_from(recorder_->drone_changes(), info_.rate_hz);
    const auto phases = engine_->drone_phases_at_tap();
    if (info_.drone.on && phases && phases->settled) info_.drone.phases = phases;  // else it began with the take
    info_.complete = recorder_->finished_cleanly();
    if (info_.complete) info_.duration_s = dur_s;  // else unknown until recovered
    const std::string problem = recorder_->problem();
    try {
        write_take_sidecar(info_);
    } catch (const Error& e) {
        result_ = std::string(e.what()) + " (the take's context; its sound is in " + info_.audio_path.string() + ")";
        return result_;
    }
    if (!problem.empty()) {
        result_ = problem;
    } else {
        result_ = "recorded " + duration_words(dur_s) + " to " + info_.audio_path.string();
        if (const std::uint64_t lost = recorder_->overflow_frames(); lost > 0)
            result_ += " (" + pitch::format_trimmed(static_cast<double>(lost) / info_.rate_hz, 2) +
                       " s dropped: the disk was too slow)";
    }
    return result_;
}

}  // namespace beatless::ui
