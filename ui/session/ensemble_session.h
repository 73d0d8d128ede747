// EnsembleSession — what the Ensemble screen shows, from the app's one engine following a group.
//
// Built from the settings' [ensemble] choices (ui/session/settings.h): the chord (its root is
// the drone's, so the Practice screen's root keys move it), the players from the saved lists
// (ui/session/ensemble_plan.h), the reference, and the multi-channel input or the demo
// ensemble. Each frame: simulated time, the newest reading and the trails, root and A4
// followed, and a message when a player sits near another voice than their own.
// Thread: the control thread (the frame loop) only.
#pragma once

#include "pitch/theory/chord.h"
#include "ui/session/app_state.h"
#include "ui/session/chord_files.h"

#include <array>
#include <memory>
#include <span>
#include <string>
#include <vector>

namespace beatless::ui {

class EnsembleSession {
public:
    EnsembleSession();
    ~EnsembleSession();
    EnsembleSession(const EnsembleSession&) = delete;
    EnsembleSession& operator=(const EnsembleSession&) = delete;

    void update(AppState& app, double dt_s);  // has the app's engine follow the group on first use
    void leave(AppState& app);                // the app's engine follows one performer again

    // Changes: saved through app.set_ensemble; false (and a message) when the
    // chord or the lists are not valid, and nothing changes.
    bool apply(AppState& app, const EnsembleSettings& e);
    void set_reference(AppState& app, pitch::ChordReference r);

    bool ready() const { return have_plan_; }  // a valid chord and players
    const ChordFile& chord() const { return chord_; }
    const std::vector<pitch::Player>& players() const { return players_; }
    const pitch::ChordChart& chart() const { return chart_; }
    double root_hz() const { return root_hz_; }
    bool engine_running() const { return running_; }
    const std::string& input_text() const { return input_text_; }
    audio::EngineStatus status() const { return status_; }

    bool has_current() const { return has_current_; }  // a reading within the last kCurrentS
    static constexpr double kCurrentS = 0.1;
    static constexpr double kNearWarnS =
        0.5;  // near another voice this long: a message                   // older readings are not shown as current (DESIGN: within 100 ms)
    const pitch::EnsembleReading& current() const { return current_; }
    // The last readings (oldest first), about recent_s of them, for the trails.
    std::span<const pitch::EnsembleReading> recent() const { return {recent_.data(), recent_count_}; }
    static constexpr double kRecentS = 0.6;

private:
    bool plan(AppState& app, const EnsembleSettings& e, bool quiet);
    void open(AppState& app);
    void forget();                               // no readings shown
    audio::EnsembleSetup setup_now() const;      // the plan as the engine takes it
    void push_setup(AppState& app);              // to the running engine; a message on failure
    void warn_near(AppState& app, double dt_s);  // a player near another voice: one message

    ChordFile chord_;
    std::vector<pitch::Player> players_;
    pitch::ChordChart chart_;
    bool have_plan_ = false;
    double root_hz_ = 0.0, a4_hz_ = 0.0;

    bool tried_ = false;
    bool running_ = false;  // the app's engine follows this group
    bool simulated_ = false;
    double sim_due_frames_ = 0.0;
    std::string input_text_ = "no input";
    audio::EngineStatus status_{};

    pitch::EnsembleReading current_{};
    bool has_current_ = false;
    double current_at_s_ = -1e9;
    std::vector<pitch::EnsembleReading> recent_;  // sized once
    std::size_t recent_count_ = 0;
    std::vector<pitch::EnsembleReading> take_buf_;      // sized once
    std::array<double, pitch::kMaxPlayers> near_s_{};   // how long each player has sat near another voice
    std::array<bool, pitch::kMaxPlayers> near_told_{};  // ... and whether a message has said so
};

}  // namespace beatless::ui
