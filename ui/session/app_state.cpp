// AppState — see app_state.h.
//
// Index
//   [trace]     TraceStore
//   [setup]     construction, the engine's life, simulated time
//   [frame]     update(), readings
//   [drone]     caution, drone controls, root
//   [targets]   target set, choice, names
//   [drills]    a drill's drone and targets, tones, the demo's script
//   [settings]  the other settings, saving, messages
#include "ui/session/app_state.h"

#include "audio/sound_system.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/notes.h"
#include "ui/session/take_words.h"
#include "ui/session/target_files.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <filesystem>
#include <initializer_list>
#include <string_view>

namespace beatless::ui {

// ---------------------------------------------------------------------------
// [SECTION] Trace
// ---------------------------------------------------------------------------

TraceStore::TraceStore(std::size_t capacity) : ring_(std::max<std::size_t>(capacity, 1)) {}

void TraceStore::push(const pitch::Reading& r) noexcept {
    ring_[head_] = r;
    head_ = (head_ + 1) % ring_.size();
    size_ = std::min(size_ + 1, ring_.size());
}

const pitch::Reading& TraceStore::at(std::size_t i) const noexcept {
    const std::size_t n = ring_.size();
    return ring_[(head_ + n - size_ + i) % n];
}

// ---------------------------------------------------------------------------
// [SECTION] Setup
// ---------------------------------------------------------------------------

namespace {

constexpr double kSimRateHz = 48000.0;
constexpr std::size_t kSimBlock = 256;
constexpr double kMessageS = 8.0;            // a message stays this long on screen
constexpr double kSaveAfterS = 1.0;          // changes are saved at most this often
constexpr double kDrillVibratoScale = 0.25;  // the demo sings drills with a narrow vibrato (common practice at a drone)

// Joins message parts with append (GCC 12 warns falsely, -Wrestrict, on
// chains of operator+ with literals here).
std::string join(std::initializer_list<std::string_view> parts) {
    std::string s;
    for (std::string_view p : parts) s.append(p);
    return s;
}

std::string device_text(const std::string& name, const std::string& host_api) {
    return host_api.empty() ? name : join({name, " (", host_api, ")"});
}

}  // namespace

AppState::AppState(Settings settings, std::filesystem::path settings_file, AppOptions options)
    : settings_(std::move(settings)),
      settings_file_(std::move(settings_file)),
      options_(std::move(options)),
      trace_(static_cast<std::size_t>(kTraceSeconds / 0.005) + 256),
      take_buf_(512),
      voices_(options_.voices == 2 ? 2 : 1),
      duo_trace_(static_cast<std::size_t>(kTraceSeconds / 0.01) + 64),
      duo_buf_(128),
      record_pending_(options_.record) {
    if (!options_.root.empty()) settings_.root = options_.root;
    if (options_.a4_hz) settings_.a4_hz = pitch::check_a4(*options_.a4_hz);
    if (options_.lowest_hz) settings_.lowest_hz = *options_.lowest_hz;
    if (!options_.target_set.empty()) settings_.target_set = options_.target_set;
    if (!options_.input_device.empty()) settings_.input_device = options_.input_device;
    if (!options_.output_device.empty()) settings_.output_device = options_.output_device;
    try {
        set_ = load_target_set(settings_.target_set);
    } catch (const Error& e) {
        post(join({e.what(), "; using the 7-limit set"}), true);
        settings_.target_set = "7-limit";
        set_ = load_target_set("7-limit");
    }
    if (!options_.target.empty()) {
        const pitch::Interval iv = pitch::parse_interval(options_.target);  // a bad one is the user's error: thrown
        auto it = std::find_if(set_.targets.begin(), set_.targets.end(),
                               [&](const pitch::Target& t) { return t.interval == iv; });
        if (it == set_.targets.end()) {
            pitch::Target t{iv, ""};
            if (const std::string* n = interval_names().find(iv)) t.name = *n;
            set_.targets.push_back(std::move(t));
            std::stable_sort(
                set_.targets.begin(), set_.targets.end(),
                [](const pitch::Target& a, const pitch::Target& b) { return a.interval.cents() < b.interval.cents(); });
        }
        settings_.choice = TargetChoice::fixed;
        settings_.fixed_target = iv.str();
    }
    fixed_index_ = 0;
    if (!settings_.fixed_target.empty()) {
        try {
            const pitch::Interval iv = pitch::parse_interval(settings_.fixed_target);
            for (std::size_t i = 0; i < set_.targets.size(); ++i)
                if (set_.targets[i].interval == iv) fixed_index_ = static_cast<int>(i);
        } catch (const Error&) {
            // An unknown fixed target falls back to the set's first.
        }
    }
    recompute_root();
    if (options_.drone) {
        drone_on_ = true;
        fade_s_ = kDroneFadeInS;  // a snapshot or scripted start shows the drone at its level
    }
    if (drone_on_ && caution_needed()) drone_on_ = false;
}

AppState::~AppState() { shutdown(); }

void AppState::recompute_root() {
    try {
        root_hz_ = pitch::parse_root(settings_.root, settings_.a4_hz);
    } catch (const Error& e) {
        post(join({e.what(), "; using A2"}), true);
        settings_.root = "A2";
        root_hz_ = pitch::parse_frequency(settings_.root, settings_.a4_hz);
    }
}

void AppState::start() {
    if (!engine_) open_engine();
    if (!takes_recovered_) {
        takes_recovered_ = true;
        try {
            for (const RecoveredTake& r : recover_takes(takes_dir()))
                post(r.problem.empty() ? "recovered a take cut short: " + r.audio_path.filename().string() + " (" +
                                             duration_words(r.duration_s) + ")"
                                       : r.problem,
                     !r.problem.empty());
        } catch (const Error& e) {
            post(e.what(), true);
        }
    }
}

bool AppState::follow_group(const audio::EnsembleSetup& setup) {
    if (engine_ && group_ && engine_->mode() == audio::EngineMode::ensemble) {
        // The same players on the same channels: the running engine takes the new plan.
        bool same = setup.players.size() == group_->players.size();
        for (std::size_t i = 0; same && i < setup.players.size(); ++i)
            same = setup.players[i].channel == group_->players[i].channel;
        if (same) {
            try {
                engine_->set_ensemble(setup);
                group_ = setup;
                return true;
            } catch (const Error& e) {
                post(e.what(), true);
                return true;
            }
        }
    }
    group_ = setup;
    close_engine();
    open_engine();
    return engine_ != nullptr;
}

void AppState::follow_performer() {
    if (!group_) return;
    group_.reset();
    close_engine();
    open_engine();
}

void AppState::open_engine() {
    if (options_.no_input) {
        input_text_ = "no input";
        return;
    }
    if (!options_.simulated && !system_tried_) {
        system_tried_ = true;
        try {
            system_ = audio::make_sound_system();
        } catch (const Error& e) {
            post(e.what(), true);
        }
    }
    if (!options_.demo && !system_) {
        input_text_ = "no input";
        post(join({"no audio system: ", audio::kDemoHint}), true);
        return;
    }
    trace_.clear();  // a new engine's stream time starts again at 0
    verdict_.reset();
    duo_trace_.clear();
    duo_.reset();
    const bool duo = voices_ == 2 && !group_;
    audio::DemoConfig dc;
    dc.sample_rate_hz = kSimRateHz;
    dc.root_hz = engine_root_hz();
    dc.seed = options_.seed;
    if (!demo_script_.empty()) {
        dc.script = demo_script_;
        dc.vibrato_scale = kDrillVibratoScale;
        for (const audio::DemoNote& n : demo_script_) dc.target_cents.push_back(n.target_cents);
        if (options_.hold_dev_cents) {
            dc.hold = true;
            dc.hold_dev_cents = *options_.hold_dev_cents;
        }
    } else if (options_.hold_dev_cents) {
        dc.hold = true;
        dc.hold_dev_cents = *options_.hold_dev_cents;
        dc.target_cents.push_back(set_.targets[static_cast<std::size_t>(fixed_index_)].interval.cents());
    } else {
        for (const auto& t : set_.targets) dc.target_cents.push_back(t.interval.cents());
    }
    // Builds and starts the engine; with_output false when the output failed.
    auto build = [&](bool with_output) {
        audio::EngineConfig ec;
        if (!group_) ec.f_min_hz = settings_.lowest_hz;  // a group keeps the engine's own range
        auto eng = std::make_unique<audio::Engine>(ec, options_.simulated ? nullptr : system_.get());
        eng->on_message([this](const std::string& m) { post(m, true); });
        if (group_) {
            eng->set_ensemble(*group_);
            if (options_.demo) {
                audio::DemoEnsembleConfig gc;
                gc.hold = options_.hold_dev_cents.has_value();
                gc.hold_dev_cents = options_.hold_dev_cents.value_or(0.0);
                eng->use_demo(gc);
            } else {
                eng->open_input_device(settings_.ensemble.input_device);
            }
        } else if (duo) {
            pitch::TwoVoiceConfig tc;
            eng->set_two_voices(tc, engine_targets());
            if (options_.demo) {
                audio::DemoDuoConfig vc;
                vc.sample_rate_hz = kSimRateHz;
                vc.root_hz = engine_root_hz();
                vc.seed = options_.seed;
                vc.script = demo_script_;  // a drill's holds as double stops (empty: her round)
                eng->use_demo(vc);
            } else {
                eng->open_input_device(settings_.input_device);
            }
        } else {
            eng->set_readings(reading_config(), engine_targets());
            if (options_.demo)
                eng->use_demo(dc);
            else
                eng->open_input_device(settings_.input_device);
        }
        if (with_output) eng->open_output_device(settings_.output_device);
        eng->set_drone(drone_settings(settings_.level_dbfs));
        eng->start(!options_.simulated);
        return eng;
    };
    const bool want_output = system_ && !options_.simulated;
    try {
        try {
            engine_ = build(want_output);
            drone_heard_ = want_output;
        } catch (const Error& e) {
            if (!want_output) throw;
            std::string first = e.what();
            engine_ = build(false);  // the input works alone: say why the drone is not heard
            drone_heard_ = false;
            post(join({first, "; the drone is not heard"}), true);
        }
    } catch (const Error& e) {
        engine_.reset();
        input_text_ = "no input";
        const std::string what = std::string(group_ ? "Ensemble input: " : "") + e.what();
        if (options_.demo)
            post(what, true);
        else if (what.find(audio::kDemoHint) != std::string::npos)
            post(join({what, "; or choose an input in Settings"}), true);
        else
            post(join({what, " (", audio::kDemoHint, ", or choose an input in Settings)"}), true);
        return;
    }
    if (group_) {
        input_text_ = engine_->input_name();
    } else if (options_.demo && duo) {
        input_text_ = "Demo violinist";
    } else if (options_.demo) {
        input_text_ = options_.hold_dev_cents ? "Demo performer (holding)" : "Demo performer";
    } else {
        const audio::StreamInfo si = engine_->input_info();
        input_text_ = device_text(si.input_name, si.host_api);
    }
    if (options_.simulated && options_.demo && !group_ && !duo) {
        sim_performer_ = std::make_unique<audio::DemoPerformer>(dc);
        sim_block_.assign(kSimBlock, 0.0f);
        sim_due_s_ = 0.0;
    }
    apply_drone();
}

void AppState::close_engine() {
    if (take_) stop_recording();  // a take is one engine's input
    if (engine_) engine_->stop();
    engine_.reset();
    sim_performer_.reset();
    drone_heard_ = false;
}

void AppState::shutdown() {
    close_engine();
    if (dirty_ && options_.save_settings) {
        dirty_ = false;
        try {
            save_settings(settings_file_, settings_);
        } catch (const Error& e) {
            std::fprintf(stderr, "beatless: %s\n", e.what());
        }
    }
}

void AppState::pump_simulation(double dt_s) {
    if (engine_ && options_.demo && voices_ == 2 && !group_) {  // the violinist plays inside the engine
        sim_due_s_ += dt_s * kSimRateHz;
        const auto n = static_cast<std::size_t>(sim_due_s_ / static_cast<double>(kSimBlock)) * kSimBlock;
        sim_due_s_ -= static_cast<double>(n);
        engine_->run_demo_frames(n);
        return;
    }
    if (!sim_performer_ || !engine_) return;
    sim_due_s_ += dt_s * kSimRateHz;
    while (sim_due_s_ >= static_cast<double>(kSimBlock)) {
        sim_due_s_ -= static_cast<double>(kSimBlock);
        sim_performer_->render(sim_block_);
        engine_->capture_block(sim_block_);
        engine_->analyze_available();
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Frame
// ---------------------------------------------------------------------------

void AppState::update(double dt_s) {
    if (!(dt_s >= 0.0)) dt_s = 0.0;
    app_time_s_ += dt_s;
    if (take_ && take_->stopped_early()) stop_recording();
    // --record: from the second frame, once the first screen has chosen what the engine follows (a group or one).
    if (record_pending_ && updates_ > 0) {
        record_pending_ = false;
        start_recording();
    }
    ++updates_;
    if (engine_) {
        if (options_.simulated) pump_simulation(dt_s);
        if (engine_->mode() == audio::EngineMode::two_voices) {
            for (std::size_t k; (k = engine_->take_readings(std::span<pitch::TwoVoiceFrame>(duo_buf_))) > 0;) {
                for (std::size_t i = 0; i < k; ++i) {
                    duo_trace_.push(duo_buf_[i]);
                    duo_.take(duo_buf_[i]);
                    // The level bar: the louder voice's fundamental (dB re a full-scale sine).
                    level_dbfs_ = std::max(duo_buf_[i].level_low_db, duo_buf_[i].level_high_db);
                    if (duo_buf_[i].clipped) last_clip_s_ = app_time_s_;
                }
                if (k < duo_buf_.size()) break;
            }
        } else {
            for (std::size_t k; (k = engine_->take_readings(take_buf_)) > 0;) {
                for (std::size_t i = 0; i < k; ++i) take(take_buf_[i]);
                if (k < take_buf_.size()) break;
            }
        }
        supervise_s_ += dt_s;
        // A group's channel messages come from supervise() in simulated time too.
        if ((!options_.simulated || group_) && supervise_s_ >= 0.1) {
            supervise_s_ = 0.0;
            engine_->supervise();
        }
    }
    verdict_.tick(dt_s);
    duo_.tick(dt_s);
    if (voices_ == 2 && !group_)  // the beat cue pulses at the measured beat when there is one
        pulse_.update(duo_.verdict().current() ? duo_.verdict().beat_hz() : NAN, dt_s);
    else
        pulse_.update(verdict_.verdict().current() ? verdict_.verdict().beat_hz : NAN, dt_s);
    if (drone_on_ && fade_s_ < kDroneFadeInS) {
        fade_s_ = std::min(kDroneFadeInS, fade_s_ + dt_s);
        apply_drone();
    }
    if (dirty_ && options_.save_settings && app_time_s_ - dirty_since_s_ >= kSaveAfterS) {
        dirty_ = false;
        try {
            save_settings(settings_file_, settings_);
        } catch (const Error& e) {
            post(e.what(), true);
        }
    }
    while (!messages_.empty() && (app_time_s_ - messages_.front().shown_at_s > kMessageS || messages_.size() > 3))
        messages_.pop_front();
}

void AppState::set_two_voices(bool on) {
    const int want = on ? 2 : 1;
    if (want == voices_) return;
    voices_ = want;
    if (group_) return;  // the Ensemble screen keeps its group; the choice applies when it is left
    close_engine();
    open_engine();
}

void AppState::take(const pitch::Reading& r) {
    trace_.push(r);
    level_dbfs_ = r.level_dbfs;
    if (r.clipped) last_clip_s_ = app_time_s_;
    verdict_.take(r);
}

audio::DroneSettings AppState::drone_sent() const { return engine_ ? engine_->drone() : audio::DroneSettings{}; }
audio::EngineStatus AppState::status() const { return engine_ ? engine_->status() : audio::EngineStatus{}; }
double AppState::stream_time_s() const { return engine_ ? engine_->stream_time_s() : 0.0; }

// ---------------------------------------------------------------------------
// [SECTION] Drone
// ---------------------------------------------------------------------------

void AppState::acknowledge_caution() {
    if (settings_.caution_acknowledged) return;
    settings_.caution_acknowledged = true;
    changed();
    dirty_since_s_ = app_time_s_ - kSaveAfterS;  // saved on the next frame
}

audio::DroneSettings AppState::drone_settings(double level_dbfs) const {
    audio::DroneSettings d;
    d.on = drone_on_;
    d.root_hz = root_hz_;
    d.fifth = settings_.fifth;
    d.octave = settings_.octave;
    d.timbre = settings_.timbre;
    if (drill_drone_) {
        d.root_hz = drill_drone_->root_hz;
        d.fifth = drill_drone_->fifth;
        d.octave = drill_drone_->octave;
        d.timbre = drill_drone_->timbre;
        level_dbfs = std::min(level_dbfs, drill_drone_->level_dbfs);
    }
    d.level_dbfs = std::clamp(level_dbfs, audio::kDroneMinLevelDbfs, audio::kDroneMaxLevelDbfs);
    if (engine_) {  // a tone asked for and not yet rendered must not be lost to a later change
        d.reference_hz = engine_->drone().reference_hz;
        d.reference_s = engine_->drone().reference_s;
        d.reference_count = engine_->drone().reference_count;
    }
    return d;
}

void AppState::apply_drone() {
    if (!engine_) return;
    double level = settings_.level_dbfs;
    if (drill_drone_) level = std::min(level, drill_drone_->level_dbfs);
    if (drone_on_ && fade_s_ < kDroneFadeInS) {  // linear in dB from the floor: heard as an even rise
        const double f = fade_s_ / kDroneFadeInS;
        level = audio::kDroneMinLevelDbfs + f * (level - audio::kDroneMinLevelDbfs);
    }
    try {
        engine_->set_drone(drone_settings(level));
    } catch (const Error& e) {
        post(e.what(), true);
    }
}

void AppState::set_drone_on(bool on) {
    if (on && caution_needed()) {
        post("Read the hearing caution and press \"I understand\" before starting the drone", true);
        return;
    }
    if (on == drone_on_) return;
    drone_on_ = on;
    fade_s_ = 0.0;
    apply_drone();
}

void AppState::set_drone_level(double level_dbfs) {
    const double v = std::clamp(level_dbfs, audio::kDroneMinLevelDbfs, audio::kDroneMaxLevelDbfs);
    if (v == settings_.level_dbfs) return;
    settings_.level_dbfs = v;
    changed();
    apply_drone();
}

void AppState::set_timbre(audio::Timbre t) {
    if (t == settings_.timbre) return;
    settings_.timbre = t;
    changed();
    apply_drone();
    apply_readings();  // the audible pair depends on the drone's partials
}

void AppState::set_fifth(bool on) {
    if (on == settings_.fifth) return;
    settings_.fifth = on;
    changed();
    apply_drone();
}

void AppState::set_octave(bool on) {
    if (on == settings_.octave) return;
    settings_.octave = on;
    changed();
    apply_drone();
}

bool AppState::set_root_text(const std::string& text) {
    if (refuse_in_drill("the root")) return false;
    double hz = 0.0;
    try {
        hz = pitch::parse_root(text, settings_.a4_hz);
        audio::DroneSettings probe = drone_settings(settings_.level_dbfs);
        probe.root_hz = hz;
        audio::check_drone_settings(probe);
    } catch (const Error& e) {
        post(e.what(), true);
        return false;
    }
    settings_.root = std::string(pitch::trim(text));
    root_hz_ = hz;
    changed();
    if (engine_) engine_->set_root_hz(root_hz_);
    apply_readings();
    apply_drone();
    return true;
}

void AppState::step_root(int semitones) {
    if (refuse_in_drill("the root")) return;
    std::string next;
    try {
        const int midi = pitch::note_to_midi(settings_.root);  // a note name moves by notes
        next = pitch::midi_to_name(
            midi + semitones, pitch::has_flat(settings_.root) ? pitch::BlackKeys::flats : pitch::BlackKeys::sharps);
    } catch (const Error&) {
        next = pitch::format_trimmed(root_hz_ * std::exp2(semitones / 12.0), 2);
    }
    set_root_text(next);
}

void AppState::sound_reference() {
    if (caution_needed()) {
        post("Read the hearing caution and press \"I understand\" before any sound is made", true);
        return;
    }
    if (!engine_ || !drone_heard_) {
        post("no output device: the reference cannot be heard", true);
        return;
    }
    engine_->sound_reference();
}

// ---------------------------------------------------------------------------
// [SECTION] Targets
// ---------------------------------------------------------------------------

pitch::TargetSet AppState::engine_targets() const {
    if (drill_targets_) return *drill_targets_;
    if (settings_.choice == TargetChoice::nearest) return set_;
    pitch::TargetSet one;
    one.id = set_.id;
    one.title = set_.title;
    one.targets.push_back(set_.targets[static_cast<std::size_t>(fixed_index_)]);
    return one;
}

pitch::ReadingConfig AppState::reading_config() const {
    pitch::ReadingConfig rc;
    rc.root_hz = engine_root_hz();
    rc.a4_hz = settings_.a4_hz;
    // The audible pair needs the drone's partials (pitch/theory/beats.h, audible_pair).
    rc.audible.partials_a = audio::timbre_highest_partial(drill_drone_ ? drill_drone_->timbre : settings_.timbre);
    return rc;
}

void AppState::apply_readings() {
    if (!engine_ || group_) return;  // a group's readings are the Ensemble screen's; these apply when it is left
    try {
        if (engine_->mode() == audio::EngineMode::two_voices) {
            engine_->set_two_voices(pitch::TwoVoiceConfig{}, engine_targets());
            duo_.reset();
            return;
        }
        engine_->set_readings(reading_config(), engine_targets());
    } catch (const Error& e) {
        post(e.what(), true);
    }
}

bool AppState::set_target_set(const std::string& name) {
    if (refuse_in_drill("the targets")) return false;
    pitch::TargetSet s;
    try {
        s = load_target_set(name);
    } catch (const Error& e) {
        post(e.what(), true);
        return false;
    }
    const pitch::Interval was = set_.targets[static_cast<std::size_t>(fixed_index_)].interval;
    set_ = std::move(s);
    fixed_index_ = 0;
    for (std::size_t i = 0; i < set_.targets.size(); ++i)
        if (set_.targets[i].interval == was) fixed_index_ = static_cast<int>(i);
    settings_.target_set = name;
    settings_.fixed_target = set_.targets[static_cast<std::size_t>(fixed_index_)].interval.str();
    verdict_.reset();
    changed();
    if (options_.demo && engine_) {  // the performer sings from the new set
        close_engine();
        open_engine();
    } else {
        apply_readings();
    }
    return true;
}

void AppState::set_choice(TargetChoice c) {
    if (c == settings_.choice || refuse_in_drill("the targets")) return;
    settings_.choice = c;
    settings_.fixed_target = set_.targets[static_cast<std::size_t>(fixed_index_)].interval.str();
    changed();
    apply_readings();
}

void AppState::step_target(int by) {
    if (refuse_in_drill("the target")) return;
    const int n = static_cast<int>(set_.targets.size());
    int from = fixed_index_;
    if (settings_.choice == TargetChoice::nearest && has_current() && current().target_index >= 0)
        from = current().target_index;
    fixed_index_ = ((from + by) % n + n) % n;
    settings_.choice = TargetChoice::fixed;
    settings_.fixed_target = set_.targets[static_cast<std::size_t>(fixed_index_)].interval.str();
    verdict_.reset();
    changed();
    if (options_.hold_dev_cents && engine_) {  // the holding performer moves to the new target
        close_engine();
        open_engine();
    } else {
        apply_readings();
    }
}

int AppState::target_index_of(const pitch::Reading& r) const {
    if (r.target_index < 0) return -1;
    if (drill_targets_) return r.target_index < static_cast<int>(drill_targets_->targets.size()) ? r.target_index : -1;
    if (settings_.choice == TargetChoice::fixed) return fixed_index_;
    return r.target_index < static_cast<int>(set_.targets.size()) ? r.target_index : -1;
}

// The set the readings are made against now: a running drill's, else the screen's.
const pitch::TargetSet& AppState::reading_set() const { return drill_targets_ ? *drill_targets_ : set_; }

std::string AppState::target_ratio_text(const pitch::Reading& r) const {
    const int i = target_index_of(r);
    if (i < 0) return {};
    const pitch::TargetSet& set = reading_set();
    try {
        return pitch::shift_octaves(set.targets[static_cast<std::size_t>(i)].interval, r.target_octaves).str();
    } catch (const Error&) {
        return set.targets[static_cast<std::size_t>(i)].interval.str();
    }
}

std::string AppState::target_name_text(const pitch::Reading& r) const {
    const int i = target_index_of(r);
    if (i < 0) return {};
    const pitch::Target& t = reading_set().targets[static_cast<std::size_t>(i)];
    return pitch::target_name_in_octave(t, r.target_octaves, interval_names());
}

// ---------------------------------------------------------------------------
// [SECTION] Drills
// ---------------------------------------------------------------------------

bool AppState::refuse_in_drill(const char* what) {
    if (!drill_drone_) return false;
    post(join({"a drill is running: stop it to change ", what}), true);
    return true;
}

bool AppState::begin_drill(const audio::DroneSettings& drone, const std::string& name) {
    if (caution_needed()) {
        post("Read the hearing caution and press \"I understand\" before starting a drill", true);
        return false;
    }
    try {
        audio::check_drone_settings(drone);
    } catch (const Error& e) {
        post(e.what(), true);
        return false;
    }
    if (!drill_drone_) drone_on_before_drill_ = drone_on_;
    drill_drone_ = drone;
    drill_name_ = name.empty() ? options_.drill : name;
    if (take_) take_->set_drill(drill_name_);  // a take already recording is of this drill from here
    if (engine_) engine_->set_root_hz(engine_root_hz());
    apply_readings();
    if (!drone_on_)
        set_drone_on(true);
    else
        apply_drone();
    return true;
}

void AppState::set_drill_targets(const pitch::TargetSet& targets) {
    if (!drill_drone_) return;
    drill_targets_ = targets;
    verdict_.reset();
    apply_readings();
}

void AppState::end_drill() {
    if (!drill_drone_) return;
    drill_drone_.reset();
    drill_targets_.reset();
    verdict_.reset();
    if (!demo_script_.empty()) {
        demo_script_.clear();
        if (options_.demo && engine_) {  // back to her usual round
            close_engine();
            open_engine();
        }
    }
    if (engine_) engine_->set_root_hz(root_hz_);
    apply_readings();
    if (!drone_on_before_drill_)
        set_drone_on(false);
    else
        apply_drone();
}

bool AppState::sound_tone(double freq_hz, double dur_s) {
    if (caution_needed() || !engine_) return false;
    try {
        engine_->sound_tone(freq_hz, dur_s);
    } catch (const Error& e) {
        post(e.what(), true);
        return false;
    }
    return drone_heard_;
}

bool AppState::play_clip(std::span<const float> samples, double rate_hz) {
    if (caution_needed() || !engine_) return false;
    try {
        return engine_->play_clip(samples, rate_hz, true) && drone_heard_;
    } catch (const Error& e) {
        post(e.what(), true);
        return false;
    }
}

void AppState::stop_clip() {
    if (engine_) engine_->stop_clip();
}

bool AppState::clip_playing() const { return engine_ && engine_->clip_playing(); }

bool AppState::sing_script(std::vector<audio::DemoNote> notes) {
    if (!options_.demo) return false;
    demo_script_ = std::move(notes);
    close_engine();
    open_engine();
    return engine_ != nullptr;
}

// ---------------------------------------------------------------------------
// [SECTION] Settings
// ---------------------------------------------------------------------------

void AppState::changed() {
    if (!dirty_) dirty_since_s_ = app_time_s_;
    dirty_ = true;
}

void AppState::set_screen(ScreenId id) {
    if (id == ScreenId::settings || id == settings_.screen) return;  // Settings is a side trip, not remembered
    settings_.screen = id;
    changed();
}

void AppState::set_font_scale(float scale) {
    const float v = std::clamp(scale, 0.5f, 3.0f);
    if (v == settings_.font_scale) return;
    settings_.font_scale = v;
    changed();
}

void AppState::set_in_tune_cents(double cents) {
    const double v = std::clamp(cents, 1.0, 25.0);
    if (v == settings_.in_tune_cents) return;
    settings_.in_tune_cents = v;
    changed();
}

static_assert(kDefaultLowestHz == audio::kLiveLowestHz, "the setting's default is the engine's");

void AppState::set_lowest_hz(double hz) {
    const double v = std::clamp(hz, kLowestMinHz, kLowestMaxHz);
    if (v == settings_.lowest_hz || refuse_in_drill("the lowest note")) return;
    settings_.lowest_hz = v;
    changed();
    if (options_.no_input || !engine_) return;
    close_engine();
    open_engine();
}

void AppState::set_a4(double a4_hz) {
    const double v = std::clamp(a4_hz, 400.0, 480.0);
    if (v == settings_.a4_hz || refuse_in_drill("A4")) return;
    settings_.a4_hz = v;
    recompute_root();
    changed();
    if (engine_) engine_->set_root_hz(root_hz_);
    apply_readings();
    apply_drone();
}

void AppState::set_devices(const std::string& input, const std::string& output) {
    if (input == settings_.input_device && output == settings_.output_device) return;
    settings_.input_device = input;
    settings_.output_device = output;
    changed();
    if (options_.simulated || options_.no_input) return;
    close_engine();
    open_engine();
}

void AppState::set_midi(const std::string& out, const std::string& tuning, const std::string& in) {
    if (out == settings_.midi_out && tuning == settings_.midi_tuning && in == settings_.midi_in) return;
    settings_.midi_out = out;
    settings_.midi_tuning = tuning;
    settings_.midi_in = in;
    changed();
}

void AppState::set_ensemble(const EnsembleSettings& e) {
    if (e == settings_.ensemble) return;
    settings_.ensemble = e;
    changed();
}

std::vector<audio::DeviceInfo> AppState::devices() {
    if (options_.simulated) return {};
    if (!system_ && !system_tried_) {
        system_tried_ = true;
        try {
            system_ = audio::make_sound_system();
        } catch (const Error& e) {
            post(e.what(), true);
        }
    }
    if (!system_) return {};
    try {
        return system_->devices();
    } catch (const Error& e) {
        post(e.what(), true);
        return {};
    }
}

std::string AppState::input_text() const { return input_text_; }

// ---------------------------------------------------------------------------
// [SECTION] Takes
// ---------------------------------------------------------------------------

void AppState::start_recording() {
    if (take_) return;
    if (!engine_) {
        post("nothing to record: no input", true);
        return;
    }
    TakeContext c;
    c.device = input_text_;
    c.screen = std::string(screen_key(settings_.screen));
    c.root = drill_drone_ ? "" : settings_.root;  // a drill's root is named from its frequency
    c.a4_hz = settings_.a4_hz;
    c.targets = settings_.target_set;
    if (settings_.choice == TargetChoice::fixed && !set_.targets.empty())
        c.target = set_.targets[static_cast<std::size_t>(fixed_index_)].interval.str();
    if (drill_drone_) c.drill = drill_name_;
    if (!group_ && two_voices()) c.voices = 2;
    int channels = 1;
    if (group_) {
        channels = static_cast<int>(group_->players.size());
        for (std::size_t i = 0; i < group_->players.size(); ++i)
            c.players.push_back(
                {static_cast<int>(i) + 1, group_->players[i].name, static_cast<int>(group_->players[i].voice) + 1});
    }
    try {
        const std::filesystem::path dir = takes_dir();
        ensure_dir(dir);
        const std::filesystem::path path = free_take_path(dir, std::time(nullptr));
        take_ = std::make_unique<TakeRecording>(*engine_, path, c, engine_->sample_rate_hz(), channels);
        post("recording " + path.filename().string());
    } catch (const Error& e) {
        post(e.what(), true);
    }
}

void AppState::stop_recording() {
    if (!take_) return;
    const bool early = take_->stopped_early();
    const std::string said = take_->stop();
    take_.reset();
    post(said, early);
}

std::string AppState::recording_name() const {
    return take_ ? take_->info().audio_path.stem().string() : std::string();
}

void AppState::post(const std::string& text, bool warning) {
    std::fprintf(stderr, "beatless: %s\n", text.c_str());
    if (!messages_.empty() && messages_.back().text == text) {
        messages_.back().shown_at_s = app_time_s_;
        return;
    }
    messages_.push_back({text, app_time_s_, warning});
}

}  // namespace beatless::ui
