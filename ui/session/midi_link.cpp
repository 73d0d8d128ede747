#include "ui/session/midi_link.h"

#include "pitch/base/error.h"
#include "pitch/theory/notes.h"
#include "ui/session/app_state.h"

#include <cmath>

namespace beatless::ui {

void MidiLink::update(AppState& app) {
    const Settings& s = app.settings();
    MidiSessionConfig c;
    c.out_port = override_.out.value_or(s.midi_out);
    c.in_port = override_.in.value_or(s.midi_in);
    const std::string tuning = override_.tuning.value_or(s.midi_tuning);
    c.a4_hz = s.a4_hz;
    const std::string key = c.out_port + "\n" + tuning + "\n" + c.in_port + "\n" + app.targets().id + "\n" +
                            std::to_string(app.targets().targets.size());
    if (key != opened_) {
        session_.reset();  // notes off on the old port first
        opened_ = key;
        if (c.out_port.empty() && c.in_port.empty()) return;
        try {
            c.retune = parse_midi_retune(tuning);
            session_ = std::make_unique<MidiSession>(c, app.root_hz(), app.targets());
            session_->set_sound(false, app.root_hz(), s.fifth, s.octave, std::nullopt);
            app.post(session_->describe());
            drone_ = false;
            target_.reset();
        } catch (const Error& e) {
            app.post(e.what(), true);
            return;
        }
    }
    if (!session_) return;
    std::vector<std::string> lines;
    const MidiSession::Change change = session_->poll(lines);
    for (const auto& l : lines) app.post(l, l.find("gone") != std::string::npos);
    if (change.root_hz)
        app.set_root_text(
            pitch::midi_to_name(static_cast<int>(std::lround(pitch::hz_to_midi(*change.root_hz, s.a4_hz)))));
    if (change.target_index) {
        app.set_choice(TargetChoice::fixed);
        app.step_target(static_cast<int>(*change.target_index) - app.fixed_index());
    }
    // Mirror what the window sounds: nothing until the drone is on (the hearing caution applies here too).
    const bool drone = app.drone_on();
    const std::optional<std::size_t> target =
        s.choice == TargetChoice::fixed ? std::optional<std::size_t>(static_cast<std::size_t>(app.fixed_index()))
                                        : std::nullopt;
    if (drone == drone_ && app.root_hz() == root_hz_ && s.fifth == fifth_ && s.octave == octave_ && target == target_)
        return;
    drone_ = drone;
    root_hz_ = app.root_hz();
    fifth_ = s.fifth;
    octave_ = s.octave;
    target_ = target;
    session_->set_sound(drone, root_hz_, fifth_, octave_, target_);
}

}  // namespace beatless::ui
