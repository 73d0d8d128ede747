// Engine implementation.
//
// [SECTION] State     — Impl: rings, trackers, cancellers, maker or analyzer, publication
// [SECTION] Setup     — what to analyse, devices, demos, file, start and stop
// [SECTION] Callbacks — capture, playback, xrun (real-time rules apply)
// [SECTION] Analysis  — analyze_available(): rings -> removal -> YIN -> readings
// [SECTION] Producers — demo and file at real-time pace, run_fast(), run_demo_frames()
// [SECTION] Control   — drone, root, reference voice, supervise()
#include "audio/engine.h"

#include "audio/soundfile.h"
#include "audio/take_recorder.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/yin.h"

#include <algorithm>
#include <array>
#include <chrono>
#include <cmath>

namespace beatless::audio {

namespace {
constexpr std::size_t kChunk = 1024;               // analysis reads at most this much per channel per step
constexpr std::size_t kScratch = 4096;             // callback scratch per channel (longer calls are chunked)
constexpr std::size_t kHistoryLen = 1024;          // ~5 s of readings at a 5 ms hop
constexpr std::size_t kPerformerStreamLen = 8192;  // one performer's readings waiting for take_readings() (~40 s)
constexpr std::size_t kEnsembleStreamLen = 2048;   // a group's (~10 s; each reading is larger)
constexpr std::size_t kMaxDronePartials = 256;
using Clock = std::chrono::steady_clock;
using pitch::kMaxPlayers;

// One performer live with a floor under the short window's (kLiveShortFloorHz): which of the two trackers'
// frames are published. The short-window tracker's, until the long-window one (the floor's) hears kEnterFrames voiced
// frames in a row under kEnterHz, each within kSameNote of the one before, while the short one hears nothing in its
// range (two notes in the long window after a change can read as their common period, 44 Hz for 176 -> 220 Hz, but
// not steadily, and the short window has the new note by then); the long-window one's then, until it hears
// kLeaveFrames voiced frames in a row over kLeaveHz (a higher note: the gap between the two keeps a note near the
// short floor from flapping), or kQuietFrames without a voiced frame (the note ended: the short window reads the next
// one from its onset), or the short one hears kLeaveFrames voiced frames in a row in its range (it is ahead in time).
// A short-window reading under kEnterHz is not trusted: a note under its floor can read there (73 Hz for a bowed C2
// at 65.4 Hz), and the long window reads that range.
constexpr double kTwoWindowsLowestHz = 55.0;  // the lowest floor read with two windows (start())

struct LowFloor {
    static constexpr double kEnterHz = kLiveShortFloorHz * 1.06;  // a semitone over the short floor
    static constexpr double kLeaveHz = kLiveShortFloorHz * 1.09;  // a semitone and a half over it
    static constexpr double kSameNote = 0.01;                     // 17 cents: a held note's frames agree far closer
    static constexpr int kEnterFrames = 3, kLeaveFrames = 2, kQuietFrames = 6;
    bool low = false;          // the long window's frames are published
    int run = 0, quiet = 0;    // frames in a row for the change, unvoiced frames in a row
    int heard_short = 0;       // the short window's voiced frames in a row in its range
    double last_low_hz = 0.0;  // the long window's last voiced frame
    double last_t_s = -1.0;    // t of the last frame published (the two trackers' frames leave in time order)
    bool low_voiced = false, short_voiced = false;  // each tracker's last frame was voiced

    // The performer sounds: either tracker hears a pitch (drone removal holds its notches while either does).
    bool sounding() const noexcept { return low_voiced || short_voiced; }

    // A frame of the long window.
    void see(const pitch::PitchFrame& f) noexcept {
        quiet = f.voiced() ? 0 : quiet + 1;
        const bool same = f.voiced() && std::fabs(f.f0_hz / last_low_hz - 1.0) < kSameNote;
        last_low_hz = f.voiced() ? f.f0_hz : 0.0;
        const bool toward = low ? f.voiced() && f.f0_hz > kLeaveHz
                                : f.voiced() && f.f0_hz < kEnterHz && (run == 0 || same) && heard_short == 0;
        run = toward ? run + 1 : 0;
        if (run >= (low ? kLeaveFrames : kEnterFrames) || (low && quiet >= kQuietFrames)) switch_window();
    }
    // A frame of the short window, its readings under kEnterHz already dropped.
    void see_short(const pitch::PitchFrame& f) noexcept {
        heard_short = f.voiced() ? heard_short + 1 : 0;
        if (low && heard_short >= kLeaveFrames) switch_window();
    }
    void switch_window() noexcept {
        low = !low;
        run = quiet = 0;
        if (publishing) publishing->store(low, std::memory_order_relaxed);
    }
    std::atomic<bool>* publishing = nullptr;  // mirrors `low` for status() (another thread)
};

std::string player_text(const pitch::Player& p, std::size_t i) {
    return "channel " + std::to_string(p.channel + 1) + " (" +
           (p.name.empty() ? "player " + std::to_string(i + 1) : p.name) + ")";
}
}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] State
// ---------------------------------------------------------------------------

struct Engine::Impl {
    InputKind input = InputKind::none;
    double rate = 0.0;
    std::size_t players = 0;                    // channels analysed (1 for one performer)
    std::array<int, kMaxPlayers> channel_of{};  // input channel of each, fixed from start()
    int in_channels = 1;                        // what the input delivers

    // Devices, streams, callback counters, the drone's output, threads.
    LiveIo io;
    bool output_lost = false;
    Clock::time_point last_try{};  // the last attempt to reopen a lost device

    // Sources other than a device.
    std::unique_ptr<DemoPerformer> demo;
    std::unique_ptr<DemoEnsemble> demo_group;
    std::unique_ptr<DemoDuo> demo_duo;
    std::unique_ptr<Drone> room_drone;                  // what the demo microphones hear of the drone
    std::vector<std::unique_ptr<SimulatedRoom>> rooms;  // one per analysed channel
    std::unique_ptr<SoundReader> file;
    std::string file_path;
    bool input_has_drone = false;

    // Rings and analysis, per analysed channel.
    std::vector<std::unique_ptr<SpscRing<float>>> rings;
    std::vector<std::unique_ptr<pitch::YinTracker>> trackers;
    // One performer live under the short floor: the long-window tracker for low notes, and which one publishes.
    std::unique_ptr<pitch::YinTracker> low;
    LowFloor floor;
    double low_span_s = 0.0;
    std::vector<std::unique_ptr<DroneCanceller>> cancellers;
    std::vector<float> cap_scratch, room_scratch, prod_scratch, work;  // work: [channel][kChunk]
    std::array<pitch::PitchFrame, kMaxPlayers> frames{};
    Latest<DroneSettings> drone_for_analysis;
    DronePartial partials[kMaxDronePartials];
    std::atomic<double> root_hz{110.0};
    double applied_root = 0.0;
    double span_s = 0.05;                     // the trackers' span
    std::atomic<bool> removal_active{false};  // written by the analysis thread, read by status() (relaxed)
    std::atomic<bool> low_publishing{false};  // the long window publishes (LowFloor::low): status()'s tracker delay
    bool started = false;
    // Set when start() has built everything the callbacks touch: a stream
    // opened earlier in start() may call back before that, and is ignored.
    std::atomic<bool> ready{false};
    // Recording tap (set_tap): the callback counts itself in while it uses it.
    std::atomic<TakeRecorder*> tap{nullptr};
    std::atomic<int> tap_users{0};

    // One performer: readings, swapped in whole when the targets change.
    std::unique_ptr<pitch::ReadingMaker> maker;
    std::atomic<pitch::ReadingMaker*> pending_maker{nullptr};
    std::atomic<pitch::ReadingMaker*> retired_maker{nullptr};
    std::atomic<double> current_target_hz{0.0};
    // A group: the analyzer, swapped the same way.
    std::unique_ptr<pitch::EnsembleAnalyzer> analyzer;
    std::atomic<pitch::EnsembleAnalyzer*> pending_analyzer{nullptr};
    std::atomic<pitch::EnsembleAnalyzer*> retired_analyzer{nullptr};
    // Two voices: their tracker, swapped the same way.
    std::unique_ptr<pitch::TwoVoiceTracker> duo;
    double duo_t0_s = 0.0;  // stream time of the current two-voice tracker's first sample (analysis thread)
    std::atomic<pitch::TwoVoiceTracker*> pending_duo{nullptr};
    std::atomic<pitch::TwoVoiceTracker*> retired_duo{nullptr};
    pitch::TwoVoiceFrame duo_frame{};

    // Publication (the one the mode uses is made in start()).
    std::unique_ptr<ReadingOutlet<pitch::Reading, kHistoryLen>> out;
    std::unique_ptr<ReadingOutlet<pitch::EnsembleReading, kHistoryLen>> group_out;
    std::unique_ptr<ReadingOutlet<pitch::TwoVoiceFrame, kHistoryLen>> duo_out;
    std::atomic<std::uint64_t> analyzed{0};
    std::atomic<bool> finished{false};

    // What supervise() last said, per player.
    std::array<pitch::PlayerState, kMaxPlayers> told{};
    std::array<int, kMaxPlayers> told_copy{};

    // Next block of the file (interleaved frames), 0 at its end or on a read error (kept for supervise()).
    std::size_t read_file_block(std::span<float> buf) {
        return io.read_block(buf, [this] { return file->read_frames(); }) / static_cast<std::size_t>(in_channels);
    }
    void publish_time(double& lat_s, std::int64_t idx) const {
        lat_s = static_cast<double>(static_cast<std::int64_t>(rings[0]->written()) - idx) / rate;
    }
};

// ---------------------------------------------------------------------------
// [SECTION] Setup
// ---------------------------------------------------------------------------

Engine::Engine(const EngineConfig& config, AudioSystem* system)
    : cfg_(config), system_(system), impl_(std::make_unique<Impl>()) {
    impl_->told.fill(pitch::PlayerState::resting);
    impl_->told_copy.fill(-1);
}

Engine::~Engine() {
    stop();
    delete impl_->pending_maker.exchange(nullptr);
    delete impl_->retired_maker.exchange(nullptr);
    delete impl_->pending_analyzer.exchange(nullptr);
    delete impl_->retired_analyzer.exchange(nullptr);
    delete impl_->pending_duo.exchange(nullptr);
    delete impl_->retired_duo.exchange(nullptr);
}

int Engine::channels_needed() const {
    if (mode_ != EngineMode::ensemble) return 1;
    int top = 0;
    for (const auto& p : setup_.players) top = std::max(top, p.channel + 1);
    return top;
}

void Engine::set_readings(const pitch::ReadingConfig& config, pitch::TargetSet targets) {
    Impl& m = *impl_;
    if (m.started && mode_ != EngineMode::performer)
        throw Error("engine: analysing a group; stop it before following one performer");
    auto maker = std::make_unique<pitch::ReadingMaker>(config, std::move(targets));
    mode_ = EngineMode::performer;
    m.root_hz.store(config.root_hz);
    drone_.root_hz = config.root_hz;
    delete m.retired_maker.exchange(nullptr);
    if (!m.started) {
        m.maker = std::move(maker);
        return;
    }
    delete m.pending_maker.exchange(maker.release());
}

void Engine::set_ensemble(EnsembleSetup setup) {
    Impl& m = *impl_;
    setup.analysis.hop_s = cfg_.hop_s;
    pitch::check_players(setup.chord, setup.players, 64);
    if (m.started) {
        bool same = mode_ == EngineMode::ensemble && setup.players.size() == setup_.players.size();
        for (std::size_t i = 0; same && i < setup.players.size(); ++i)
            same = setup.players[i].channel == setup_.players[i].channel;
        if (!same) throw Error("ensemble: the players or their channels changed; stop and start the ensemble again");
    }
    auto a = std::make_unique<pitch::EnsembleAnalyzer>(setup.chord, setup.players, setup.analysis);
    setup_ = std::move(setup);
    have_setup_ = true;
    mode_ = EngineMode::ensemble;
    m.root_hz.store(setup_.analysis.root_hz);
    delete m.retired_analyzer.exchange(nullptr);
    if (!m.started) {
        m.analyzer = std::move(a);
        return;
    }
    delete m.pending_analyzer.exchange(a.release());
}

void Engine::set_two_voices(const pitch::TwoVoiceConfig& config, pitch::TargetSet targets) {
    Impl& m = *impl_;
    if (m.started && mode_ != EngineMode::two_voices)
        throw Error("engine: analysing another shape; stop it before following two voices");
    two_config_ = config;
    two_targets_ = std::move(targets);
    mode_ = EngineMode::two_voices;
    delete m.retired_duo.exchange(nullptr);
    if (!m.started) return;
    pitch::TwoVoiceConfig tc = two_config_;
    tc.sample_rate_hz = m.rate;
    tc.max_block_len_samples = kChunk * 4;
    delete m.pending_duo.exchange(new pitch::TwoVoiceTracker(tc, two_targets_));
}

void Engine::open_input_device(std::string_view spec) {
    if (!system_) throw Error(std::string("no audio system for an input device (") + kDemoHint + ")");
    if (mode_ == EngineMode::ensemble && !have_setup_) throw Error("ensemble: set the players before opening a device");
    Impl& m = *impl_;
    const auto devs = system_->devices();
    const int in = choose_device(devs, spec, Direction::input);
    const int need = channels_needed();
    for (const auto& d : devs) {
        if (d.index != in) continue;
        m.io.input_spec = d.name;
        if (d.max_input_channels < need) {
            const std::size_t n = setup_.players.size();
            std::string chans;
            for (const auto& p : setup_.players)
                chans.append(chans.empty() ? "" : ",").append(std::to_string(p.channel + 1));
            throw Error("input device '" + d.name + "' has " + std::to_string(d.max_input_channels) + " input channel" +
                        (d.max_input_channels == 1 ? "" : "s") + "; " + std::to_string(n) + " player" +
                        (n == 1 ? "" : "s") + " on channels " + chans + " need " + std::to_string(need));
        }
    }
    m.io.request.input_device = in;
    if (need > 1) m.io.request.input_channels = need;
    m.io.request.sample_rate_hz = cfg_.sample_rate_hz;
    m.io.request.block_len_frames = cfg_.block_len_frames;
    m.input = InputKind::device;
}

void Engine::open_output_device(std::string_view spec) {
    impl_->io.choose_output(system_, spec, cfg_.block_len_frames);
}

void Engine::use_demo(DemoConfig demo) {
    Impl& m = *impl_;
    if (demo.sample_rate_hz <= 0.0) demo.sample_rate_hz = cfg_.sample_rate_hz > 0.0 ? cfg_.sample_rate_hz : 48000.0;
    m.demo = std::make_unique<DemoPerformer>(demo);
    m.demo_group.reset();
    m.demo_duo.reset();
    m.in_channels = 1;
    m.input = InputKind::demo;
}

void Engine::use_demo(DemoDuoConfig demo) {
    Impl& m = *impl_;
    if (demo.sample_rate_hz <= 0.0) demo.sample_rate_hz = cfg_.sample_rate_hz > 0.0 ? cfg_.sample_rate_hz : 48000.0;
    m.demo_duo = std::make_unique<DemoDuo>(demo);
    m.demo.reset();
    m.demo_group.reset();
    m.in_channels = 1;
    m.input = InputKind::demo;
}

void Engine::use_demo(DemoEnsembleConfig demo) {
    if (mode_ != EngineMode::ensemble || !have_setup_)
        throw Error("ensemble: set the players before choosing the demo");
    Impl& m = *impl_;
    if (demo.sample_rate_hz <= 0.0) demo.sample_rate_hz = cfg_.sample_rate_hz > 0.0 ? cfg_.sample_rate_hz : 48000.0;
    demo.root_hz = setup_.analysis.root_hz;
    if (demo.voice_cents.empty()) {
        // An open voicing, as a group would sing it: the player whose voice
        // ranks k of n from the lowest sits in the octave nearest to
        // 110 Hz * 2^(2.2 k / (n - 1)) (about A2 for the lowest part up to
        // about B4 for the highest, in whatever order the players are
        // listed; they are octave-equivalent, so any octave is measured the
        // same way).
        const std::size_t n = setup_.players.size();
        for (std::size_t j = 0; j < n; ++j) {
            std::size_t k = 0;  // the rank of player j's voice (ties by listing order)
            for (std::size_t q = 0; q < n; ++q)
                k += setup_.players[q].voice < setup_.players[j].voice ||
                     (setup_.players[q].voice == setup_.players[j].voice && q < j);
            const double c = setup_.chord.voice_cents(setup_.players[j].voice);
            const double centre_hz =
                110.0 * std::exp2(n > 1 ? 2.2 * static_cast<double>(k) / static_cast<double>(n - 1) : 0.0);
            const double base_hz = setup_.analysis.root_hz * std::exp2(c / 1200.0);
            const double octaves = std::round(std::log2(centre_hz / base_hz));
            demo.voice_cents.push_back(c + 1200.0 * octaves);
        }
    }
    if (demo.channel_of_singer.empty())
        for (const auto& p : setup_.players) demo.channel_of_singer.push_back(p.channel);
    m.demo_group = std::make_unique<DemoEnsemble>(demo);
    m.demo.reset();
    m.in_channels = m.demo_group->channels();
    m.input = InputKind::demo;
}

double Engine::use_file(const std::string& path) {
    if (mode_ == EngineMode::ensemble && !have_setup_) throw Error("ensemble: set the players before choosing a file");
    Impl& m = *impl_;
    // One performer hears the file's channels mixed; a group reads them apart.
    const bool group = mode_ == EngineMode::ensemble;
    auto f = std::make_unique<SoundReader>(path, -1, std::min(cfg_.block_len_frames, kScratch));
    if (group) {
        try {
            pitch::check_players(setup_.chord, setup_.players, f->info().channels);
        } catch (const Error& e) {
            throw Error(path + ": " + e.what() + (f->info().channels == 1 ? "; the file is mono" : ""));
        }
    }
    m.in_channels = group ? f->info().channels : 1;
    m.file = std::move(f);
    m.file_path = path;
    m.input = InputKind::file;
    return m.file->info().sample_rate_hz;
}

void Engine::set_input_has_drone(bool on) { impl_->input_has_drone = on; }

std::string Engine::input_name() const {
    const Impl& m = *impl_;
    switch (m.input) {
        case InputKind::device:
            return "'" + m.io.input_spec + "'" +
                   (m.io.in_info.host_api.empty() ? "" : " (" + m.io.in_info.host_api + ")");
        case InputKind::demo:
            return m.demo_group ? "the demo ensemble" : m.demo_duo ? "the demo violinist" : "the demo performer";
        case InputKind::file: return "'" + m.file_path + "'";
        case InputKind::none: break;
    }
    return "no input";
}

void Engine::start(bool analysis_thread) {
    Impl& m = *impl_;
    if (m.started) return;
    const bool group = mode_ == EngineMode::ensemble;
    const bool duo = mode_ == EngineMode::two_voices;
    if (group ? !m.analyzer : !duo && !m.maker)
        throw Error(group ? "ensemble: no chord and players set"
                          : "engine: readings are not set up (no root or targets)");
    if (m.input == InputKind::device) {
        const StreamInfo& info = m.io.open_input(*system_, *this);
        m.rate = info.sample_rate_hz;
        m.in_channels = std::max(1, info.input_channels);
        if (m.in_channels < channels_needed()) {
            m.io.in_stream.reset();
            throw Error("input device '" + m.io.input_spec + "' opened with " + std::to_string(m.in_channels) +
                        " channels; the players need " + std::to_string(channels_needed()));
        }
    } else if (m.input == InputKind::demo) {
        m.rate = m.demo_group ? m.demo_group->config().sample_rate_hz
                 : m.demo_duo ? m.demo_duo->config().sample_rate_hz
                              : m.demo->config().sample_rate_hz;
        if (group != (m.demo_group != nullptr) || duo != (m.demo_duo != nullptr))
            throw Error("engine: the demo does not match what is analysed (one performer or a group)");
    } else if (m.input == InputKind::file) {
        m.rate = m.file->info().sample_rate_hz;
    } else {
        throw Error(std::string(group ? "ensemble" : "engine") +
                    ": no input chosen (a device, --demo or --input-file)");
    }
    rate_hz_ = m.rate;
    m.players = group ? setup_.players.size() : 1;
    for (std::size_t i = 0; i < m.players; ++i) m.channel_of[i] = group ? setup_.players[i].channel : 0;
    // Everything the analysis needs, sized once.
    pitch::YinConfig yc;
    yc.sample_rate_hz = m.rate;
    yc.hop_s = cfg_.hop_s;
    // One performer live favours a short span (a step settles within 40 ms);
    // a file favours the longer span's accuracy and range; a group takes
    // 50 ms everywhere: with the neighbours in every microphone, a shorter
    // span lets crosstalk move a low voice by several cents, and a held chord
    // needs no faster step response.
    const bool live = m.input != InputKind::file;
    const bool short_span = live && !group;
    yc.f_min_hz = cfg_.f_min_hz > 0.0 ? cfg_.f_min_hz
                  : short_span        ? kLiveLowestHz
                  : group             ? 55.0
                                      : pitch::kFileLowestHz;
    // One performer live with a floor under the short window's: the short window keeps its floor, and a second
    // tracker with the span the floor needs reads the notes under it (LowFloor).
    const double floor_hz = yc.f_min_hz;
    // Not under 55 Hz (a double bass): there the second window's frames, switched with the short one's, left drone
    // removal's notches worse than one long window does (a bass note 5 Hz over an E1 drone read +-60 c); one long
    // window serves, as before.
    const bool two_windows =
        short_span && !duo && cfg_.span_s <= 0.0 && floor_hz < kLiveShortFloorHz && floor_hz >= kTwoWindowsLowestHz;
    if (two_windows) yc.f_min_hz = kLiveShortFloorHz;
    yc.f_max_hz = cfg_.f_max_hz;
    yc.max_block_len_samples = kChunk * 4;
    // 30 ms or 50 ms, or the shortest span that holds two periods of a lower
    // f_min (a cello's C string, a double bass: those readings settle later).
    yc.span_s =
        cfg_.span_s > 0.0 ? cfg_.span_s : std::max(short_span ? 0.030 : 0.050, pitch::YinTracker::min_span_s(yc));
    m.span_s = yc.span_s;
    // The vibrato correction waits three hops for a frame's right neighbours:
    // not worth it for one performer's live settling bar.
    if (short_span) yc.vibrato_correction = false;
    m.low.reset();
    m.floor = LowFloor{};
    m.floor.publishing = &m.low_publishing;
    m.low_publishing.store(false, std::memory_order_relaxed);
    if (two_windows) {
        pitch::YinConfig low_yc = yc;
        low_yc.f_min_hz = floor_hz;
        // Its frames matter only under LowFloor::kLeaveHz: searched up to 400 Hz, its coarse stage runs at under half
        // the short one's rate. At least 50 ms (a file's span): no settling bar down there, and a C2 at 20 dB SNR
        // reads within 1 c (test_live).
        low_yc.f_max_hz = std::min(yc.f_max_hz, 400.0);
        low_yc.span_s = std::max(0.050, pitch::YinTracker::min_span_s(low_yc));
        m.low = std::make_unique<pitch::YinTracker>(low_yc);
        m.low_span_s = low_yc.span_s;
    }
    CancellerConfig cc = cfg_.canceller;
    cc.sample_rate_hz = m.rate;
    // A note change leaves unvoiced frames for up to a span (two notes in it): not a silence to widen the notch in.
    cc.quiet_hold_s = std::max({cc.quiet_hold_s, yc.span_s, m.low ? m.low_span_s : 0.0});
    // A recording: the voice may sound from the first sample, so there is no
    // silent moment to learn the room in; one notch width throughout.
    if (m.input_has_drone) cc.bandwidth_hz = cc.quiet_bandwidth_hz = cc.recording_bandwidth_hz;
    for (std::size_t i = 0; i < m.players; ++i) {
        m.rings.push_back(std::make_unique<SpscRing<float>>(static_cast<std::size_t>(cfg_.ring_s * m.rate)));
        if (!duo) m.trackers.push_back(std::make_unique<pitch::YinTracker>(yc));
        m.cancellers.push_back(std::make_unique<DroneCanceller>(cc));
    }
    m.cap_scratch.assign(kScratch, 0.0f);
    m.room_scratch.assign(kScratch, 0.0f);
    m.io.play_scratch.assign(kScratch, 0.0f);
    m.prod_scratch.assign(kScratch * static_cast<std::size_t>(m.in_channels), 0.0f);
    m.work.assign(kChunk * m.players, 0.0f);
    if (group)
        m.group_out = std::make_unique<ReadingOutlet<pitch::EnsembleReading, kHistoryLen>>(kEnsembleStreamLen);
    else if (duo)
        m.duo_out = std::make_unique<ReadingOutlet<pitch::TwoVoiceFrame, kHistoryLen>>(kPerformerStreamLen);
    else
        m.out = std::make_unique<ReadingOutlet<pitch::Reading, kHistoryLen>>(kPerformerStreamLen);
    if (duo) {
        pitch::TwoVoiceConfig tc = two_config_;
        tc.sample_rate_hz = m.rate;
        tc.max_block_len_samples = kChunk * 4;
        m.duo = std::make_unique<pitch::TwoVoiceTracker>(tc, two_targets_);
        m.duo_t0_s = 0.0;
        m.span_s = static_cast<double>(m.duo->window_len_samples()) / m.rate;
    }
    if (m.input == InputKind::demo) {
        // Each microphone hears the drone from its own place in the room.
        m.room_drone = std::make_unique<Drone>(m.rate);
        m.room_drone->set(drone_);
        for (std::size_t i = 0; i < m.players; ++i) {
            RoomConfig rc = cfg_.demo_room;
            if (group) {
                rc.delay_s = 0.005 + 0.002 * static_cast<double>(i);
                rc.gain = 0.8 - 0.05 * static_cast<double>(i % 4);
                rc.lowpass_hz = RoomConfig{}.lowpass_hz;
            }
            rc.sample_rate_hz = m.rate;
            m.rooms.push_back(std::make_unique<SimulatedRoom>(rc));
        }
    }
    m.io.open_output(system_, *this, m.input == InputKind::device ? m.rate : cfg_.sample_rate_hz, drone_);
    m.drone_for_analysis.publish(drone_);
    m.applied_root = 0.0;
    m.started = true;
    m.ready.store(true, std::memory_order_release);
    m.io.watch_from(Clock::now());
    m.io.running.store(true);
    if (analysis_thread) {
        m.io.start_analysis([this] { return analyze_available(); });
        if (m.input == InputKind::demo || m.input == InputKind::file) {
            const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
            m.io.start_producer(block, m.rate, [this, block]() -> std::size_t {
                Impl& s = *impl_;
                std::span<float> buf(s.prod_scratch.data(), block * static_cast<std::size_t>(s.in_channels));
                std::size_t n = block;
                if (s.demo)
                    s.demo->render(buf);
                else if (s.demo_group)
                    s.demo_group->render(buf);
                else if (s.demo_duo)
                    s.demo_duo->render(buf);
                else
                    n = s.read_file_block(buf);
                if (n > 0) capture(buf.data(), n, s.in_channels);
                return n;
            });
        }
    }
}

void Engine::stop() {
    Impl& m = *impl_;
    m.io.stop_threads();
    if (!m.io.in_stream && !m.io.out_stream) return;
    // A stream whose callbacks have stopped (its device gone, not yet noticed
    // by supervise) is retired rather than closed here, which could block.
    bool flowing = !m.io.input_lost;
    if (flowing && m.input == InputKind::device) {
        const std::uint64_t before = m.io.callbacks.load();
        std::this_thread::sleep_for(std::chrono::milliseconds(60));
        flowing = m.io.callbacks.load() != before;
    }
    m.io.close_streams(system_, flowing);
}

// ---------------------------------------------------------------------------
// [SECTION] Callbacks
// ---------------------------------------------------------------------------

void Engine::capture(const float* in, std::size_t frames, int channels) noexcept {
    Impl& m = *impl_;
    m.io.count_callback();
    if (!m.ready.load(std::memory_order_acquire)) return;
    const auto ch = static_cast<std::size_t>(std::max(1, channels));
    // The tap: counted in before it is read, so set_tap(nullptr) knows when the old one is free. A file's
    // flushing silence after its end is not recorded.
    TakeRecorder* tap = nullptr;
    const bool tapped = m.tap.load(std::memory_order_relaxed) != nullptr && !m.io.producer_done.load();
    if (tapped) {
        m.tap_users.fetch_add(1, std::memory_order_acq_rel);
        tap = m.tap.load(std::memory_order_acquire);
    }
    std::size_t done = 0;
    while (done < frames) {
        const std::size_t n = std::min(frames - done, kScratch);
        if (m.room_drone) m.room_drone->render(std::span<float>(m.room_scratch.data(), n));
        for (std::size_t p = 0; p < m.players; ++p) {
            float* s = m.cap_scratch.data();
            const auto c = static_cast<std::size_t>(m.channel_of[p]);
            if (ch == 1 && c == 0) {
                std::copy_n(in + done, n, s);
            } else if (c < ch) {
                const float* src = in + done * ch + c;
                for (std::size_t i = 0; i < n; ++i) s[i] = src[i * ch];
            } else {
                std::fill_n(s, n, 0.0f);  // not delivered: silence (reported by the silent-channel check)
            }
            // The demo's microphones also hear the drone through their room.
            if (m.room_drone)
                m.rooms[p]->process_add(std::span<const float>(m.room_scratch.data(), n), std::span<float>(s, n));
            m.rings[p]->write(std::span<const float>(s, n));
            if (tap) tap->capture(p, std::span<const float>(s, n));
        }
        done += n;
    }
    if (tapped) m.tap_users.fetch_sub(1, std::memory_order_release);
}

void Engine::playback(float* out, std::size_t frames, int channels) noexcept {
    if (!impl_->ready.load(std::memory_order_acquire)) {
        std::fill_n(out, frames * static_cast<std::size_t>(std::max(1, channels)), 0.0f);
        return;
    }
    impl_->io.play(out, frames, channels);
}

void Engine::xrun(bool input_overflow, bool output_underflow) noexcept {
    impl_->io.count_xrun(input_overflow, output_underflow);
}

// ---------------------------------------------------------------------------
// [SECTION] Analysis
// ---------------------------------------------------------------------------

std::size_t Engine::analyze_available() noexcept {
    Impl& m = *impl_;
    if (m.rings.empty()) return 0;
    if (pitch::ReadingMaker* fresh = m.pending_maker.exchange(nullptr)) {
        pitch::ReadingMaker* old = m.maker.release();
        m.maker.reset(fresh);
        m.applied_root = 0.0;
        delete m.retired_maker.exchange(old);  // normally empty: the control thread frees retired makers
    }
    if (pitch::EnsembleAnalyzer* fresh = m.pending_analyzer.exchange(nullptr)) {
        pitch::EnsembleAnalyzer* old = m.analyzer.release();
        m.analyzer.reset(fresh);
        delete m.retired_analyzer.exchange(old);  // normally empty: the control thread frees retired analyzers
    }
    if (pitch::TwoVoiceTracker* fresh = m.pending_duo.exchange(nullptr)) {
        pitch::TwoVoiceTracker* old = m.duo.release();
        m.duo.reset(fresh);
        // A tracker set while running (new targets) counts time from its first sample: keep the stream's clock.
        m.duo_t0_s = static_cast<double>(m.analyzed.load(std::memory_order_relaxed)) / m.rate;
        delete m.retired_duo.exchange(old);  // normally empty: the control thread frees retired trackers
    }
    const double root = m.root_hz.load(std::memory_order_acquire);
    if (root != m.applied_root) {
        m.applied_root = root;
        if (m.maker) m.maker->set_root_hz(root);
        if (m.input_has_drone && cfg_.drone_removal)
            for (auto& c : m.cancellers) {
                c->set_harmonics(root);
                c->set_level(1.0, true);
            }
    }
    DroneSettings ds;
    if (m.drone_for_analysis.read(ds) && cfg_.drone_removal && !m.input_has_drone) {
        const std::size_t n = drone_partials(ds, m.rate, m.cancellers[0]->config().max_freq_hz, m.partials);
        for (auto& c : m.cancellers) {
            c->set_partials(std::span<const DronePartial>(m.partials, n));
            c->set_level(ds.on ? drone_gain(ds.level_dbfs) : 0.0);
        }
    }
    const bool removal_active = cfg_.drone_removal && m.cancellers[0]->active();
    m.removal_active.store(removal_active, std::memory_order_relaxed);

    std::size_t total = 0;
    while (total < 8 * kChunk) {
        // The rings fill in lock-step; take what every one of them holds.
        std::size_t n = kChunk;
        for (const auto& r : m.rings) n = std::min(n, r->available());
        if (n == 0) break;
        for (std::size_t p = 0; p < m.players; ++p) {
            std::span<float> w(&m.work[p * kChunk], n);
            m.rings[p]->read(w);
            if (removal_active) m.cancellers[p]->process(w, w);
            if (m.duo)
                m.duo->push(w);
            else
                m.trackers[p]->push(w);
            if (m.low) m.low->push(w);
        }
        m.analyzed.fetch_add(n, std::memory_order_relaxed);
        total += n;
        analyze_frames();
    }
    if (total == 0 && m.io.producer_done.load(std::memory_order_acquire) && m.rings[0]->available() == 0)
        m.finished.store(true);
    return total;
}

// Channel p's frame with the drone taken out of it: unvoiced where drone removal is still learning or the pitch is the
// drone's residue. Thread: analysis. Allocates: no.
void Engine::drop_drone(pitch::PitchFrame& f, std::size_t p, bool removal_active) noexcept {
    const DroneCanceller& c = *impl_->cancellers[p];
    // While drone removal is still learning the room (a quarter of a
    // second after the drone starts or moves), the drone may leak
    // through: those frames are reported unvoiced.
    if (removal_active && c.acquiring()) f.f0_hz = 0.0;
    // What is left of the drone after removal (a real room is never
    // quite linear and still): quiet, and at the drone's own pitch.
    if (removal_active && f.voiced() && c.is_residue(f.f0_hz, f.level_dbfs)) f.f0_hz = 0.0;
}

// The next frame of the first channel to publish: its tracker's, or with a second, long-window tracker for the notes
// under the short floor, the frames of the one LowFloor chooses, in time order (the long window's lag behind: a frame
// no later than the last published is dropped). Thread: analysis. Allocates: no.
bool Engine::next_frame(pitch::PitchFrame& out) noexcept {
    Impl& m = *impl_;
    if (!m.low) return m.trackers[0]->pull(out);
    // Both trackers' frames lose the drone first: its residue must neither choose the window nor pass for a voice.
    const bool removal_active = m.removal_active.load(std::memory_order_relaxed);
    for (;;) {
        pitch::PitchFrame f;
        bool pulled = false;
        // The long window's frames first: they decide which tracker publishes.
        while (m.low->pull(f)) {
            pulled = true;
            drop_drone(f, 0, removal_active);
            m.floor.low_voiced = f.voiced();
            m.floor.see(f);
            if (m.floor.low && f.t_s > m.floor.last_t_s) {
                m.floor.last_t_s = f.t_s;
                out = f;
                return true;
            }
        }
        if (m.trackers[0]->pull(f)) {
            pulled = true;
            drop_drone(f, 0, removal_active);
            m.floor.short_voiced = f.voiced();
            if (f.voiced() && f.f0_hz < LowFloor::kEnterHz) {
                f.f0_hz = 0.0;
                f.confidence = std::min(f.confidence, 0.49);  // unvoiced frames stay under 0.5
            }
            m.floor.see_short(f);
            if (!m.floor.low && f.t_s > m.floor.last_t_s) {
                m.floor.last_t_s = f.t_s;
                out = f;
                return true;
            }
        }
        if (!pulled) return false;
    }
}

// Every tracker frame ready: drone-removal checks per channel, then one
// reading (one performer) or one ensemble reading (a group), published.
void Engine::analyze_frames() noexcept {
    Impl& m = *impl_;
    const bool removal_active = m.removal_active.load(std::memory_order_relaxed);  // set by analyze_available()
    if (m.duo) {
        pitch::TwoVoiceFrame& f = m.duo_frame;
        while (m.duo->pull(f)) {
            f.t_s += m.duo_t0_s;
            f.end_s += m.duo_t0_s;
            const auto idx = static_cast<std::int64_t>(std::llround(f.t_s * m.rate));
            double lat_s = 0.0;
            m.publish_time(lat_s, idx);
            m.duo_out->publish(f, lat_s);
            if (removal_active && !m.input_has_drone) {
                const auto now = static_cast<double>(m.analyzed.load(std::memory_order_relaxed));
                const double onset = f.t_s - 0.5 * m.span_s;
                m.cancellers[0]->set_voice(f.voices > 0, static_cast<std::size_t>(std::max(0.0, now - onset * m.rate)));
            }
        }
        return;
    }
    while (next_frame(m.frames[0])) {
        for (std::size_t p = 1; p < m.players; ++p)
            if (!m.trackers[p]->pull(m.frames[p])) m.frames[p] = pitch::PitchFrame{m.frames[0].t_s, 0.0, 0.0};
        for (std::size_t p = 0; p < m.players; ++p) drop_drone(m.frames[p], p, removal_active);
        const auto idx = static_cast<std::int64_t>(std::llround(m.frames[0].t_s * m.rate));
        double lat_s = 0.0;
        m.publish_time(lat_s, idx);
        if (mode_ == EngineMode::performer) {
            const pitch::Reading r = m.maker->make(m.frames[0], idx);
            if (r.target_index >= 0)
                m.current_target_hz.store(r.root_hz * std::exp2(r.target_cents / 1200.0), std::memory_order_relaxed);
            m.out->publish(r, lat_s);
        } else {
            m.group_out->publish(
                m.analyzer->process(std::span<const pitch::PitchFrame>(m.frames.data(), m.players), idx), lat_s);
        }
        if (removal_active && !m.input_has_drone) {
            // Tell drone removal whether the performer sounds, and since when.
            const auto now = static_cast<double>(m.analyzed.load(std::memory_order_relaxed));
            for (std::size_t p = 0; p < m.players; ++p) {
                const pitch::PitchFrame& f = m.frames[p];
                const double onset = f.t_s - 0.5 * (m.floor.low ? m.low_span_s : m.span_s);
                const bool sounding = f.voiced() || (m.low && m.floor.sounding());
                m.cancellers[p]->set_voice(sounding, static_cast<std::size_t>(std::max(0.0, now - onset * m.rate)));
            }
        }
    }
}

StreamInfo Engine::input_info() const { return impl_->io.in_info; }
StreamInfo Engine::output_info() const { return impl_->io.out_info; }

bool Engine::latest(pitch::Reading& out) { return impl_->out && impl_->out->latest.read(out); }
bool Engine::latest(pitch::EnsembleReading& out) { return impl_->group_out && impl_->group_out->latest.read(out); }
bool Engine::latest(pitch::TwoVoiceFrame& out) { return impl_->duo_out && impl_->duo_out->latest.read(out); }
std::size_t Engine::history(std::span<pitch::TwoVoiceFrame> out) const {
    return impl_->duo_out ? impl_->duo_out->history.read(out) : 0;
}
std::size_t Engine::take_readings(std::span<pitch::TwoVoiceFrame> out) {
    return impl_->duo_out ? impl_->duo_out->stream.read(out) : 0;
}
std::size_t Engine::history(std::span<pitch::Reading> out) const {
    return impl_->out ? impl_->out->history.read(out) : 0;
}
std::size_t Engine::history(std::span<pitch::EnsembleReading> out) const {
    return impl_->group_out ? impl_->group_out->history.read(out) : 0;
}
std::size_t Engine::take_readings(std::span<pitch::Reading> out) {
    return impl_->out ? impl_->out->stream.read(out) : 0;
}
std::size_t Engine::take_readings(std::span<pitch::EnsembleReading> out) {
    return impl_->group_out ? impl_->group_out->stream.read(out) : 0;
}
double Engine::stream_time_s() const {
    return impl_->rate > 0 ? static_cast<double>(impl_->analyzed.load()) / impl_->rate : 0.0;
}

EngineStatus Engine::status() const {
    const Impl& m = *impl_;
    EngineStatus st;
    st.mode = mode_;
    st.input = m.input;
    st.sample_rate_hz = m.rate;
    st.channels = m.in_channels;
    st.players = static_cast<int>(m.started ? m.players : mode_ == EngineMode::performer ? 1 : setup_.players.size());
    if (!m.rings.empty()) {
        st.captured_frames = m.rings[0]->written();
        st.ring_overflow_frames = m.rings[0]->overflow_samples();
        st.ring_overflow_events = m.rings[0]->overflow_events();
    }
    st.analyzed_frames = m.analyzed.load();
    m.io.report(st);
    for (const auto& t : m.trackers) st.tracker_dropped_frames += t->dropped_frames();
    if (m.low) st.tracker_dropped_frames += m.low->dropped_frames();
    if (m.out) m.out->report(st);
    if (m.group_out) m.group_out->report(st);
    if (m.duo_out) m.duo_out->report(st);
    // The delay of the window whose frames are published now: the long one while it reads a low note.
    st.tracker_delay_s = m.duo                                                       ? 0.5 * m.span_s
                         : m.low && m.low_publishing.load(std::memory_order_relaxed) ? m.low->delay_s()
                         : m.trackers.empty()                                        ? 0.0
                                                                                     : m.trackers[0]->delay_s();
    st.device_input_latency_s = m.io.in_info.input_latency_s;
    st.device_output_latency_s = m.io.out_info.output_latency_s;
    st.input_ok = m.started && !m.io.input_lost && !m.finished.load();
    st.output_ok = !m.io.want_output || (m.started && !m.output_lost);
    st.finished = m.finished.load();
    st.drone_removal_active = m.removal_active.load(std::memory_order_relaxed);
    return st;
}

// ---------------------------------------------------------------------------
// [SECTION] Producers (the real-time ones live in start())
// ---------------------------------------------------------------------------

template <class R>
void Engine::run_fast_impl(const std::function<void(const R&)>& on_reading, double max_s) {
    Impl& m = *impl_;
    if (m.input != InputKind::file)
        throw Error(std::string(mode_ == EngineMode::ensemble ? "ensemble" : "engine") + ": --fast needs --input-file");
    start(false);
    const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
    const auto ch = static_cast<std::size_t>(m.in_channels);
    std::span<float> buf(m.prod_scratch.data(), block * ch);
    std::vector<R> got(std::is_same_v<R, pitch::Reading> ? 256 : 64);
    m.io.run_fast<R>(
        buf, ch, static_cast<std::size_t>(0.2 * m.rate), std::span<R>(got), max_s, on_reading,
        [&m](std::span<float> b) { return m.read_file_block(b); },
        [this, &m](const float* data, std::size_t n) {
            // A take being recorded keeps every frame: the file waits for its writer rather than overflow its rings.
            if (TakeRecorder* t = m.tap.load())
                while (!t->stopped_early() && t->space_frames() < n)
                    std::this_thread::sleep_for(std::chrono::milliseconds(1));
            capture(data, n, m.in_channels);
            analyze_available();
        },
        [this](std::span<R> g) { return take_readings(g); }, [this] { return stream_time_s(); });
    m.finished.store(true);
}

void Engine::run_fast(const std::function<void(const pitch::Reading&)>& on_reading, double max_s) {
    if (mode_ != EngineMode::performer) throw Error("engine: analysing a group; its readings are ensemble readings");
    run_fast_impl<pitch::Reading>(on_reading, max_s);
}

void Engine::run_fast(const std::function<void(const pitch::EnsembleReading&)>& on_reading, double max_s) {
    if (mode_ != EngineMode::ensemble)
        throw Error("engine: following one performer; its readings are not ensemble readings");
    run_fast_impl<pitch::EnsembleReading>(on_reading, max_s);
}

void Engine::run_fast(const std::function<void(const pitch::TwoVoiceFrame&)>& on_reading, double max_s) {
    if (mode_ != EngineMode::two_voices) throw Error("engine: not following two voices");
    run_fast_impl<pitch::TwoVoiceFrame>(on_reading, max_s);
}

void Engine::run_demo_frames(std::size_t frames) noexcept {
    Impl& m = *impl_;
    if ((!m.demo && !m.demo_group && !m.demo_duo) || !m.started || m.io.analysis.joinable()) return;
    const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
    const auto ch = static_cast<std::size_t>(m.in_channels);
    while (frames > 0) {
        const std::size_t n = std::min(frames, block);
        std::span<float> buf(m.prod_scratch.data(), n * ch);
        if (m.demo)
            m.demo->render(buf);
        else if (m.demo_duo)
            m.demo_duo->render(buf);
        else
            m.demo_group->render(buf);
        capture(buf.data(), n, m.in_channels);
        analyze_available();
        frames -= n;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Control
// ---------------------------------------------------------------------------

void Engine::set_drone(const DroneSettings& s) {
    check_drone_settings(s);
    Impl& m = *impl_;
    drone_ = s;
    m.root_hz.store(s.root_hz);
    if (TakeRecorder* tap = m.tap.load(std::memory_order_acquire)) tap->note_drone(s);
    if (!m.started) return;
    if (m.io.out_drone) m.io.out_drone->set(s);
    if (m.room_drone) m.room_drone->set(s);
    m.drone_for_analysis.publish(s);
}

void Engine::set_tap(TakeRecorder* r) {
    Impl& m = *impl_;
    m.tap.store(r, std::memory_order_release);
    if (r && m.io.out_drone) m.io.out_drone->request_phases();
    if (r) {
        r->note_drone(drone_);
        return;
    }
    while (m.tap_users.load(std::memory_order_acquire) != 0)
        std::this_thread::sleep_for(std::chrono::microseconds(200));
}

std::optional<DronePhases> Engine::drone_phases_at_tap() const {
    const Drone* d = impl_->io.out_drone.get();
    if (!d || !d->phases_taken()) return std::nullopt;
    return d->phases_at_request();
}

void Engine::set_root_hz(double root_hz) {
    DroneSettings s = drone_;
    s.root_hz = root_hz;
    set_drone(s);
}

void Engine::sound_reference() {
    const double hz = impl_->current_target_hz.load();
    if (!(hz > 0.0)) {
        say("no target yet: sing or play a note first, then ask for the reference");
        return;
    }
    DroneSettings s = drone_;
    s.reference_hz = hz;
    ++s.reference_count;
    set_drone(s);
}

void Engine::sound_tone(double freq_hz, double dur_s) {
    if (!(freq_hz >= 20.0 && freq_hz <= 5000.0))
        throw Error("tone " + pitch::format_trimmed(freq_hz, 2) + " Hz: out of range (20 Hz to 5 kHz)");
    if (!(dur_s >= 0.1 && dur_s <= 30.0))
        throw Error("tone length " + pitch::format_trimmed(dur_s, 3) + " s: out of range (0.1 to 30 s)");
    DroneSettings s = drone_;
    s.reference_hz = freq_hz;
    s.reference_s = dur_s;
    ++s.reference_count;
    set_drone(s);
}

bool Engine::play_clip(std::span<const float> samples, double rate_hz, bool hush_drone) {
    if (samples.empty()) throw Error("clip: empty");
    if (!(rate_hz > 0.0) || static_cast<double>(samples.size()) / rate_hz > 60.0)
        throw Error("clip of " + std::to_string(samples.size()) + " samples: longer than 60 s or no rate");
    Impl& m = *impl_;
    if (!m.io.out_drone) return false;
    auto clip = std::make_unique<Clip>();
    clip->samples = resample_linear(samples, rate_hz, m.io.out_drone->sample_rate_hz());
    clip->gain = std::pow(10.0, drone_.level_dbfs / 20.0);  // RMS 1 -> the drone's RMS level
    clip->hush_drone = hush_drone;
    m.io.out_drone->clip().play(std::move(clip));
    return true;
}

void Engine::stop_clip() {
    if (impl_->io.out_drone) impl_->io.out_drone->clip().stop();
}

bool Engine::clip_playing() const { return impl_->io.out_drone && impl_->io.out_drone->clip().busy(); }

double Engine::clip_position_s() const { return impl_->io.out_drone ? impl_->io.out_drone->clip().position_s() : 0.0; }

void Engine::supervise() {
    Impl& m = *impl_;
    if (m.io.out_drone) m.io.out_drone->clip().collect();
    delete m.retired_maker.exchange(nullptr);
    delete m.retired_analyzer.exchange(nullptr);
    delete m.retired_duo.exchange(nullptr);
    if (m.io.producer_failed.exchange(false)) say(m.io.producer_error);
    if (!m.started) return;
    if (m.input != InputKind::device) {
        if (m.io.want_output && !m.output_lost && m.io.out_stream && !m.io.out_stream->alive()) {
            m.output_lost = true;
            say("output device '" + m.io.output_spec + "' stopped; the drone is silent");
        }
        if (mode_ == EngineMode::ensemble) tell_channels();
        return;
    }
    // The device: callbacks must keep coming; a lost device is looked for
    // again every reopen_every_s, by name, with the same channels and rate.
    const auto now = Clock::now();
    const bool group = mode_ == EngineMode::ensemble;
    if (!m.io.input_lost) {
        const bool stalled = m.io.stalled(now, cfg_.stall_s, cfg_.first_callback_s);
        if (stalled || !m.io.in_stream || !m.io.in_stream->alive() || (m.io.out_stream && !m.io.out_stream->alive())) {
            m.io.input_lost = true;
            m.output_lost = m.io.want_output;
            say("input device '" + m.io.input_spec + "' stopped delivering audio; " +
                (group ? "ensemble readings" : "readings") + " paused" +
                std::string(m.io.want_output ? ", drone stopped" : "") + "; trying to reopen it every " +
                pitch::format_trimmed(cfg_.reopen_every_s, 1) + " s");
            m.io.retire_streams(*system_);
            m.last_try = now;
        }
    } else if (std::chrono::duration<double>(now - m.last_try).count() >= cfg_.reopen_every_s) {
        m.last_try = now;
        if (m.io.try_reopen(*system_, *this, now)) {
            m.output_lost = false;
            say("input device '" + m.io.input_spec + "' is back (" +
                pitch::format_trimmed(m.io.in_stream->info().sample_rate_hz, 0) + " Hz)");
        }
    }
    if (group) tell_channels();
}

// A group's channels: one line whenever a player's channel becomes silent,
// carries another's voice, or recovers.
void Engine::tell_channels() {
    Impl& m = *impl_;
    if (!m.group_out || m.group_out->history.count() == 0) return;
    pitch::EnsembleReading r;
    if (m.group_out->history.read(std::span<pitch::EnsembleReading>(&r, 1)) == 0) return;
    for (std::size_t i = 0; i < setup_.players.size() && i < kMaxPlayers; ++i) {
        const pitch::PlayerReading& p = r.p[i];
        const pitch::PlayerState was = m.told[i];
        const bool bad = p.state == pitch::PlayerState::silent || p.state == pitch::PlayerState::copy;
        const bool was_bad = was == pitch::PlayerState::silent || was == pitch::PlayerState::copy;
        const std::string who = player_text(setup_.players[i], i);
        if (p.state == pitch::PlayerState::silent && was != pitch::PlayerState::silent) {
            say(who + " is silent while the others sound: check its microphone and cable");
        } else if (p.state == pitch::PlayerState::copy &&
                   (was != pitch::PlayerState::copy || m.told_copy[i] != p.copy_of)) {
            const std::size_t o = static_cast<std::size_t>(p.copy_of);
            const double d = r.p[o].level_dbfs - p.level_dbfs;
            std::string level = std::isfinite(d) && std::fabs(d) > 3.0
                                    ? "; it is " + pitch::format_trimmed(std::round(std::fabs(d)), 0) + " dB " +
                                          (d > 0 ? "quieter" : "louder")
                                    : "";
            say(who + " carries the same voice as " + player_text(setup_.players[o], o) + level +
                ": its microphone hears the neighbour (crosstalk) or the two share one source");
        } else if (was_bad && !bad) {
            say(who + " is back: its own voice again");
        }
        if (bad || was_bad) {
            m.told[i] = bad ? p.state : pitch::PlayerState::sounding;
            m.told_copy[i] = p.copy_of;
        }
    }
}

}  // namespace beatless::audio
