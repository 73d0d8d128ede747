#include "ui/session/ensemble_session.h"

#include "audio/sound_system.h"
#include "pitch/base/error.h"
#include "pitch/theory/spelling.h"
#include "pitch/base/text.h"
#include "ui/session/ensemble_plan.h"

#include <cctype>
#include <cmath>

namespace beatless::ui {

namespace {
constexpr double kSimRateHz = 48000.0;
}

EnsembleSession::EnsembleSession()
    : recent_(static_cast<std::size_t>(kRecentS / 0.005) + 8), take_buf_(128) {}

EnsembleSession::~EnsembleSession() { close(); }

void EnsembleSession::close() {
    if (engine_) engine_->stop();
    engine_.reset();
    input_text_ = "no input";
    has_current_ = false;
    recent_count_ = 0;
}

void EnsembleSession::leave(AppState& app) {
    close();
    tried_ = false;  // open again when the screen is shown again
    if (took_devices_) {
        took_devices_ = false;
        app.resume_devices();
    }
}

bool EnsembleSession::plan(AppState& app, const EnsembleSettings& e, bool quiet) {
    try {
        ChordFile c = chord_from_argument(e.chord);
        std::vector<pitch::Player> ps = plan_players(c, PlanLists{e.channels, e.names, e.voices});
        const double root = app.root_hz(), a4 = app.settings().a4_hz;
        pitch::ChordChart chart = pitch::chord_chart(c.chord, root, pitch::ChartConfig{a4, 16});
        // Notes spelled as `beatless chord` spells them: against the root's own spelling.
        const std::string_view rt = pitch::trim(app.settings().root);
        if (!rt.empty() && std::isalpha(static_cast<unsigned char>(rt[0]))) {
            std::vector<int> midi;
            for (const auto& v : chart.voices) midi.push_back(v.note.midi);
            const std::vector<std::string> names = pitch::spell_chord(pitch::parse_tonic(rt), midi);
            for (std::size_t k = 0; k < names.size() && k < chart.voices.size(); ++k) chart.voices[k].note.name = names[k];
        }
        chord_ = std::move(c);
        players_ = std::move(ps);
        chart_ = std::move(chart);
        root_hz_ = root;
        a4_hz_ = a4;
        have_plan_ = true;
        return true;
    } catch (const Error& e2) {
        if (!quiet) app.post(std::string("Ensemble: ") + e2.what(), true);
        return false;
    }
}

audio::DroneSettings EnsembleSession::drone_of(const AppState& app) const {
    audio::DroneSettings d;
    const Settings& s = app.settings();
    d.on = app.drone_on();
    d.root_hz = app.root_hz();
    d.timbre = s.timbre;
    d.fifth = s.fifth;
    d.octave = s.octave;
    d.level_dbfs = s.level_dbfs;
    return d;
}

void EnsembleSession::open(AppState& app) {
    tried_ = true;
    const AppOptions& o = app.options();
    if (!have_plan_ && !plan(app, app.settings().ensemble, false)) {
        // The saved choices do not work: fall back to the defaults, said once.
        if (!plan(app, EnsembleSettings{}, true)) return;
    }
    if (o.no_input) {
        input_text_ = "no input";
        return;
    }
    simulated_ = o.simulated;
    const audio::EnsembleSetup setup = setup_now();
    // From devices, this engine takes them over from the app's (which gets
    // them back in leave()) and plays the drone itself.
    if (!o.demo && app.suspend_devices()) took_devices_ = true;
    auto build = [&](bool with_output) {
        auto eng = std::make_unique<audio::EnsembleEngine>(audio::EnsembleEngineConfig{}, o.demo ? nullptr : system_.get());
        eng->on_message([&app](const std::string& m) { app.post(m, true); });
        eng->set_setup(setup);
        if (o.demo) {
            audio::DemoEnsembleConfig dc;
            dc.hold = o.hold_dev_cents.has_value();
            dc.hold_dev_cents = o.hold_dev_cents.value_or(0.0);
            eng->use_demo(dc);
        } else {
            eng->open_input_device(app.settings().ensemble.input_device);
            if (with_output) eng->open_output_device(app.settings().output_device);
        }
        drone_ = drone_of(app);
        eng->set_drone(drone_);
        eng->start(!simulated_);
        return eng;
    };
    try {
        if (!o.demo && !system_) system_ = audio::make_sound_system();
        try {
            engine_ = build(took_devices_);
        } catch (const Error& e) {
            if (!took_devices_) throw;
            const std::string first = e.what();
            engine_ = build(false);  // the input works alone: say why the drone is not heard
            app.post(std::string("Ensemble: ") + first + "; the drone is not heard", true);
        }
        input_text_ = engine_->input_name();
    } catch (const Error& e) {
        engine_.reset();
        input_text_ = "no input";
        const std::string what = e.what();
        const bool hinted = o.demo || what.find(audio::kDemoHint) != std::string::npos;
        app.post("Ensemble input: " + what + (hinted ? "" : std::string(" (") + audio::kDemoHint + ")"), true);
        if (took_devices_) {  // the app's engine keeps the drone and the Practice input
            took_devices_ = false;
            app.resume_devices();
        }
    }
}

audio::EnsembleSetup EnsembleSession::setup_now() const {
    audio::EnsembleSetup s{chord_.chord, players_, {}};
    s.analysis.root_hz = root_hz_;
    s.analysis.a4_hz = a4_hz_;
    return s;
}

void EnsembleSession::push_setup(AppState& app) {
    try {
        engine_->set_setup(setup_now());
    } catch (const Error& e) {
        app.post(e.what(), true);
    }
}

bool EnsembleSession::apply(AppState& app, const EnsembleSettings& e) {
    const EnsembleSettings& was = app.settings().ensemble;
    const bool only_reference = e.chord == was.chord && e.channels == was.channels && e.names == was.names && e.voices == was.voices &&
                                e.input_device == was.input_device;
    if (!only_reference) {
        const std::vector<pitch::Player> before = players_;
        if (!plan(app, e, false)) return false;
        bool same_channels = before.size() == players_.size() && e.input_device == was.input_device;
        for (std::size_t i = 0; same_channels && i < before.size(); ++i) same_channels = before[i].channel == players_[i].channel;
        app.set_ensemble(e);
        if (engine_ && same_channels) {
            push_setup(app);
        } else if (tried_) {
            close();
            open(app);
        }
        return true;
    }
    app.set_ensemble(e);
    return true;
}

void EnsembleSession::set_reference(AppState& app, pitch::ChordReference r) {
    EnsembleSettings e = app.settings().ensemble;
    e.reference = r;
    apply(app, e);
}

void EnsembleSession::update(AppState& app, double dt_s) {
    if (!tried_) open(app);
    if (!(dt_s >= 0.0)) dt_s = 0.0;
    // The root and A4 are the app's: follow them.
    if (have_plan_ && (app.root_hz() != root_hz_ || app.settings().a4_hz != a4_hz_)) {
        plan(app, app.settings().ensemble, false);
        if (engine_) push_setup(app);
    }
    if (!engine_) return;
    const audio::DroneSettings d = drone_of(app);
    if (d.on != drone_.on || d.root_hz != drone_.root_hz || d.level_dbfs != drone_.level_dbfs || d.timbre != drone_.timbre ||
        d.fifth != drone_.fifth || d.octave != drone_.octave) {
        drone_ = d;
        try {
            engine_->set_drone(d);
        } catch (const Error& e) {
            app.post(e.what(), true);
        }
    }
    if (simulated_) {
        sim_due_frames_ += dt_s * kSimRateHz;
        const auto n = static_cast<std::size_t>(sim_due_frames_);
        sim_due_frames_ -= static_cast<double>(n);
        engine_->run_demo_frames(n);
    }
    bool got = false;
    for (std::size_t k; (k = engine_->take_readings(take_buf_)) > 0;) {
        current_ = take_buf_[k - 1];
        got = true;
        if (k < take_buf_.size()) break;
    }
    if (got) current_at_s_ = app.app_time_s();
    has_current_ = app.app_time_s() - current_at_s_ <= kCurrentS;
    recent_count_ = engine_->history(recent_);
    warn_near(app, dt_s);
    supervise_s_ += dt_s;
    if (supervise_s_ >= 0.1) {
        supervise_s_ = 0.0;
        engine_->supervise();
    }
}

// Players near another voice than their own for half a second: one
// message (the message bar shows few at a time, so players reaching that
// together share it); a player is named again only after they return.
void EnsembleSession::warn_near(AppState& app, double dt_s) {
    const pitch::Chord& c = chord_.chord;
    std::string who;   // "S near 7/4 (assigned 1/1), A near ..."
    int count = 0;
    std::string one;   // the sentence for a single player
    for (std::size_t i = 0; i < players_.size() && i < pitch::kMaxPlayers; ++i) {
        const pitch::PlayerReading& p = current_.p[i];
        if (has_current_ && p.state == pitch::PlayerState::off_voice && p.near_voice >= 0) {
            near_s_[i] += dt_s;
            if (near_s_[i] >= kNearWarnS && !near_told_[i]) {
                near_told_[i] = true;
                const std::string near = c.voice_ratio(static_cast<std::size_t>(p.near_voice)).str();
                const std::string assigned = c.voice_ratio(players_[i].voice).str();
                who += (count ? ", " : "") + players_[i].name + " near " + near + " (assigned " + assigned + ")";
                one = players_[i].name + " is singing near " + near + ", assigned " + assigned;
                ++count;
            }
        } else if (has_current_ && p.state == pitch::PlayerState::sounding) {
            near_s_[i] = 0.0;
            near_told_[i] = false;
        }
    }
    if (count == 1) app.post(one + " (names are read top voice first; pick the voice below)", true);
    if (count > 1) app.post(who + ": names are read top voice first; pick the voices below", true);
}

}  // namespace beatless::ui
