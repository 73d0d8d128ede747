#include "ui/session/ensemble_session.h"

#include "audio/sound_system.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/spelling.h"
#include "ui/session/ensemble_plan.h"

#include <cctype>
#include <cmath>

namespace beatless::ui {

namespace {
constexpr double kSimRateHz = 48000.0;  // the demo ensemble's rate in simulated time
}

EnsembleSession::EnsembleSession() : recent_(static_cast<std::size_t>(kRecentS / 0.005) + 8), take_buf_(128) {}

EnsembleSession::~EnsembleSession() = default;

void EnsembleSession::forget() {
    running_ = false;
    input_text_ = "no input";
    status_ = {};
    has_current_ = false;
    recent_count_ = 0;
}

void EnsembleSession::leave(AppState& app) {
    forget();
    tried_ = false;  // follow the group again when the screen is shown again
    app.follow_performer();
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
            for (std::size_t k = 0; k < names.size() && k < chart.voices.size(); ++k)
                chart.voices[k].note.name = names[k];
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

void EnsembleSession::open(AppState& app) {
    tried_ = true;
    const AppOptions& o = app.options();
    if (!have_plan_ && !plan(app, app.settings().ensemble, false)) {
        // The saved choices do not work: fall back to the defaults, said once.
        if (!plan(app, EnsembleSettings{}, true)) return;
    }
    forget();
    if (o.no_input) return;
    simulated_ = o.simulated;
    running_ = app.follow_group(setup_now());
    if (running_) input_text_ = app.input_text();
}

audio::EnsembleSetup EnsembleSession::setup_now() const {
    audio::EnsembleSetup s{chord_.chord, players_, {}};
    s.analysis.root_hz = root_hz_;
    s.analysis.a4_hz = a4_hz_;
    return s;
}

void EnsembleSession::push_setup(AppState& app) { running_ = app.follow_group(setup_now()); }

bool EnsembleSession::apply(AppState& app, const EnsembleSettings& e) {
    const EnsembleSettings& was = app.settings().ensemble;
    const bool only_reference = e.chord == was.chord && e.channels == was.channels && e.names == was.names &&
                                e.voices == was.voices && e.input_device == was.input_device;
    if (!only_reference) {
        const std::vector<pitch::Player> before = players_;
        if (!plan(app, e, false)) return false;
        bool same_channels = before.size() == players_.size() && e.input_device == was.input_device;
        for (std::size_t i = 0; same_channels && i < before.size(); ++i)
            same_channels = before[i].channel == players_[i].channel;
        app.set_ensemble(e);
        if (running_ && same_channels) {
            push_setup(app);
        } else if (tried_) {
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
        if (running_) push_setup(app);
    }
    audio::Engine* engine = running_ && app.following_group() ? app.engine() : nullptr;
    if (!engine) {
        forget();
        return;
    }
    status_ = engine->status();
    if (simulated_) {
        sim_due_frames_ += dt_s * kSimRateHz;
        const auto n = static_cast<std::size_t>(sim_due_frames_);
        sim_due_frames_ -= static_cast<double>(n);
        engine->run_demo_frames(n);
    }
    bool got = false;
    for (std::size_t k; (k = engine->take_readings(std::span<pitch::EnsembleReading>(take_buf_))) > 0;) {
        current_ = take_buf_[k - 1];
        got = true;
        if (k < take_buf_.size()) break;
    }
    if (got) current_at_s_ = app.app_time_s();
    has_current_ = app.app_time_s() - current_at_s_ <= kCurrentS;
    recent_count_ = engine->history(std::span<pitch::EnsembleReading>(recent_));
    warn_near(app, dt_s);
}

// Players near another voice than their own for half a second: one
// message (the message bar shows few at a time, so players reaching that
// together share it); a player is named again only after they return.
void EnsembleSession::warn_near(AppState& app, double dt_s) {
    const pitch::Chord& c = chord_.chord;
    std::string who;  // "S near 7/4 (assigned 1/1), A near ..."
    int count = 0;
    std::string one;  // the sentence for a single player
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
