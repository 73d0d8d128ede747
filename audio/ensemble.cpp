// EnsembleEngine implementation.
//
// Index
//   1. State         — Impl: rings, trackers, cancellers, analyzer, publication
//   2. Setup         — setup, devices, demo, file, start and stop
//   3. Callbacks     — capture, playback, xrun (real-time rules apply)
//   4. Analysis      — analyze_available(): rings -> removal -> YIN -> ensemble
//   5. Producers     — demo and file at real-time pace, run_fast()
//   6. Control       — drone, supervise() and its messages
#include "audio/ensemble.h"

#include "audio/soundfile.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/yin.h"

#include <algorithm>
#include <array>
#include <chrono>
#include <cmath>

namespace beatless::audio {

namespace {
constexpr std::size_t kChunk = 1024;          // analysis reads at most this much per player per step
constexpr std::size_t kScratch = 4096;        // callback scratch per player (longer calls are chunked)
constexpr std::size_t kHistoryLen = 1024;     // ~5 s of readings at a 5 ms hop
constexpr std::size_t kStreamLen = 2048;      // readings waiting for take_readings() (~10 s)
constexpr std::size_t kMaxDronePartials = 256;
using Clock = std::chrono::steady_clock;
using pitch::kMaxPlayers;

std::string player_text(const pitch::Player& p, std::size_t i) {
    return "channel " + std::to_string(p.channel + 1) + " (" + (p.name.empty() ? "player " + std::to_string(i + 1) : p.name) + ")";
}
}  // namespace

// ---------------------------------------------------------------------------
// 1. State
// ---------------------------------------------------------------------------

struct EnsembleEngine::Impl {
    InputKind input = InputKind::none;
    double rate = 0.0;
    std::size_t players = 0;
    std::array<int, kMaxPlayers> channel_of{};   // fixed from start()
    int in_channels = 0;                         // what the input delivers

    // Devices, streams, callback counters, the drone's output, threads.
    LiveIo io;
    Clock::time_point last_try{};                // the last attempt to reopen a lost device

    // Sources other than a device.
    std::unique_ptr<DemoEnsemble> demo;
    std::unique_ptr<Drone> room_drone;                     // what the demo's microphones hear of the drone
    std::vector<std::unique_ptr<SimulatedRoom>> rooms;     // one per player
    std::unique_ptr<SoundReader> file;
    std::string file_path;
    bool input_has_drone = false;

    // Rings and analysis, per player.
    std::vector<std::unique_ptr<SpscRing<float>>> rings;
    std::vector<std::unique_ptr<pitch::YinTracker>> trackers;
    std::vector<std::unique_ptr<DroneCanceller>> cancellers;
    std::vector<float> cap_scratch, room_scratch, prod_scratch, work;  // work: [player][kChunk]
    std::array<pitch::PitchFrame, kMaxPlayers> frames{};
    Latest<DroneSettings> drone_for_analysis;
    DronePartial partials[kMaxDronePartials];
    bool removal_active = false;
    double span_s = 0.05;
    std::unique_ptr<pitch::EnsembleAnalyzer> analyzer;
    std::atomic<pitch::EnsembleAnalyzer*> pending{nullptr};
    std::atomic<pitch::EnsembleAnalyzer*> retired{nullptr};
    bool started = false;

    // Publication.
    ReadingOutlet<pitch::EnsembleReading, kHistoryLen> out{kStreamLen};
    std::atomic<std::uint64_t> analyzed{0};
    std::atomic<bool> finished{false};

    // What supervise() last said, per player.
    std::array<pitch::PlayerState, kMaxPlayers> told{};
    std::array<int, kMaxPlayers> told_copy{};

    // Next block of the file (interleaved frames), 0 at its end or on an error.
    std::size_t read_file_block(std::span<float> buf) {
        return io.read_block(buf, [this] { return file->read_frames(); }) / static_cast<std::size_t>(in_channels);
    }
};

// ---------------------------------------------------------------------------
// 2. Setup
// ---------------------------------------------------------------------------

EnsembleEngine::EnsembleEngine(const EnsembleEngineConfig& config, AudioSystem* system)
    : cfg_(config), system_(system), impl_(std::make_unique<Impl>()) {
    impl_->told.fill(pitch::PlayerState::resting);
    impl_->told_copy.fill(-1);
}

EnsembleEngine::~EnsembleEngine() {
    stop();
    delete impl_->pending.exchange(nullptr);
    delete impl_->retired.exchange(nullptr);
}

int EnsembleEngine::channels_needed() const {
    int top = 0;
    for (const auto& p : setup_.players) top = std::max(top, p.channel + 1);
    return top;
}

void EnsembleEngine::set_setup(EnsembleSetup setup) {
    Impl& m = *impl_;
    setup.analysis.hop_s = cfg_.hop_s;
    pitch::check_players(setup.chord, setup.players, 64);
    if (m.started) {
        bool same = setup.players.size() == setup_.players.size();
        for (std::size_t i = 0; same && i < setup.players.size(); ++i) same = setup.players[i].channel == setup_.players[i].channel;
        if (!same) throw Error("ensemble: the players or their channels changed; stop and start the ensemble again");
    }
    auto a = std::make_unique<pitch::EnsembleAnalyzer>(setup.chord, setup.players, setup.analysis);
    setup_ = std::move(setup);
    have_setup_ = true;
    delete m.retired.exchange(nullptr);
    if (!m.started) {
        m.analyzer = std::move(a);
        return;
    }
    delete m.pending.exchange(a.release());
}

void EnsembleEngine::open_input_device(std::string_view spec) {
    if (!system_) throw Error(std::string("no audio system for an input device (") + kDemoHint + ")");
    if (!have_setup_) throw Error("ensemble: set the players before opening a device");
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
            for (const auto& p : setup_.players) chans.append(chans.empty() ? "" : ",").append(std::to_string(p.channel + 1));
            throw Error("input device '" + d.name + "' has " + std::to_string(d.max_input_channels) + " input channel" +
                        (d.max_input_channels == 1 ? "" : "s") + "; " + std::to_string(n) + " player" + (n == 1 ? "" : "s") +
                        " on channels " + chans + " need " + std::to_string(need));
        }
    }
    m.io.request.input_device = in;
    m.io.request.input_channels = need;
    m.io.request.sample_rate_hz = cfg_.sample_rate_hz;
    m.io.request.block_len_frames = cfg_.block_len_frames;
    m.input = InputKind::device;
}

void EnsembleEngine::open_output_device(std::string_view spec) { impl_->io.choose_output(system_, spec, cfg_.block_len_frames); }

void EnsembleEngine::use_demo(DemoEnsembleConfig demo) {
    if (!have_setup_) throw Error("ensemble: set the players before choosing the demo");
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
                k += setup_.players[q].voice < setup_.players[j].voice || (setup_.players[q].voice == setup_.players[j].voice && q < j);
            const double c = setup_.chord.voice_cents(setup_.players[j].voice);
            const double centre_hz = 110.0 * std::exp2(n > 1 ? 2.2 * static_cast<double>(k) / static_cast<double>(n - 1) : 0.0);
            const double base_hz = setup_.analysis.root_hz * std::exp2(c / 1200.0);
            const double octaves = std::round(std::log2(centre_hz / base_hz));
            demo.voice_cents.push_back(c + 1200.0 * octaves);
        }
    }
    if (demo.channel_of_singer.empty())
        for (const auto& p : setup_.players) demo.channel_of_singer.push_back(p.channel);
    m.demo = std::make_unique<DemoEnsemble>(demo);
    m.in_channels = m.demo->channels();
    m.input = InputKind::demo;
}

double EnsembleEngine::use_file(const std::string& path) {
    if (!have_setup_) throw Error("ensemble: set the players before choosing a file");
    Impl& m = *impl_;
    auto f = std::make_unique<SoundReader>(path, -1, std::min(cfg_.block_len_frames, kScratch));
    try {
        pitch::check_players(setup_.chord, setup_.players, f->info().channels);
    } catch (const Error& e) {
        throw Error(path + ": " + e.what() + (f->info().channels == 1 ? "; the file is mono" : ""));
    }
    m.in_channels = f->info().channels;
    m.file = std::move(f);
    m.file_path = path;
    m.input = InputKind::file;
    return m.file->info().sample_rate_hz;
}

void EnsembleEngine::set_input_has_drone(bool on) { impl_->input_has_drone = on; }

std::string EnsembleEngine::input_name() const {
    const Impl& m = *impl_;
    switch (m.input) {
        case InputKind::device: return "'" + m.io.input_spec + "'" + (m.io.in_info.host_api.empty() ? "" : " (" + m.io.in_info.host_api + ")");
        case InputKind::demo: return "the demo ensemble";
        case InputKind::file: return "'" + m.file_path + "'";
        case InputKind::none: break;
    }
    return "no input";
}

void EnsembleEngine::start(bool analysis_thread) {
    Impl& m = *impl_;
    if (m.started) return;
    if (!m.analyzer) throw Error("ensemble: no chord and players set");
    if (m.input == InputKind::device) {
        const StreamInfo& info = m.io.open_input(*system_, *this);
        m.rate = info.sample_rate_hz;
        m.in_channels = info.input_channels;
        if (m.in_channels < channels_needed()) {
            m.io.in_stream.reset();
            throw Error("input device '" + m.io.input_spec + "' opened with " + std::to_string(m.in_channels) + " channels; the players need " +
                        std::to_string(channels_needed()));
        }
    } else if (m.input == InputKind::demo) {
        m.rate = m.demo->config().sample_rate_hz;
    } else if (m.input == InputKind::file) {
        m.rate = m.file->info().sample_rate_hz;
    } else {
        throw Error("ensemble: no input chosen (a device, --demo or --input-file)");
    }
    rate_hz_ = m.rate;
    m.players = setup_.players.size();
    for (std::size_t i = 0; i < m.players; ++i) m.channel_of[i] = setup_.players[i].channel;
    // Everything the analysis needs, sized once.
    pitch::YinConfig yc;
    yc.sample_rate_hz = m.rate;
    yc.hop_s = cfg_.hop_s;
    yc.span_s = cfg_.span_s;
    yc.f_min_hz = cfg_.f_min_hz;
    yc.f_max_hz = cfg_.f_max_hz;
    yc.max_block_len_samples = kChunk * 4;
    m.span_s = yc.span_s;
    CancellerConfig cc = cfg_.canceller;
    cc.sample_rate_hz = m.rate;
    if (m.input_has_drone) cc.bandwidth_hz = cc.quiet_bandwidth_hz = cc.recording_bandwidth_hz;
    for (std::size_t i = 0; i < m.players; ++i) {
        m.rings.push_back(std::make_unique<SpscRing<float>>(static_cast<std::size_t>(cfg_.ring_s * m.rate)));
        m.trackers.push_back(std::make_unique<pitch::YinTracker>(yc));
        m.cancellers.push_back(std::make_unique<DroneCanceller>(cc));
    }
    m.cap_scratch.assign(kScratch, 0.0f);
    m.room_scratch.assign(kScratch, 0.0f);
    m.io.play_scratch.assign(kScratch, 0.0f);
    m.prod_scratch.assign(kScratch * static_cast<std::size_t>(std::max(1, m.in_channels)), 0.0f);
    m.work.assign(kChunk * m.players, 0.0f);
    if (m.input == InputKind::demo) {
        // Each microphone hears the drone from its own place in the room.
        m.room_drone = std::make_unique<Drone>(m.rate);
        m.room_drone->set(drone_);
        for (std::size_t i = 0; i < m.players; ++i) {
            RoomConfig rc;
            rc.sample_rate_hz = m.rate;
            rc.delay_s = 0.005 + 0.002 * static_cast<double>(i);
            rc.gain = 0.8 - 0.05 * static_cast<double>(i % 4);
            m.rooms.push_back(std::make_unique<SimulatedRoom>(rc));
        }
    }
    m.io.open_output(system_, *this, m.input == InputKind::device ? m.rate : cfg_.sample_rate_hz, drone_);
    m.drone_for_analysis.publish(drone_);
    m.started = true;
    m.io.seen_at = Clock::now();
    m.io.running.store(true);
    if (analysis_thread) {
        m.io.start_analysis([this] { return analyze_available(); });
        if (m.input == InputKind::demo || m.input == InputKind::file) {
            const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
            m.io.start_producer(block, m.rate, [this, block]() -> std::size_t {
                Impl& s = *impl_;
                std::span<float> buf(s.prod_scratch.data(), block * static_cast<std::size_t>(s.in_channels));
                std::size_t n = block;
                if (s.demo) s.demo->render(buf);
                else n = s.read_file_block(buf);
                if (n > 0) capture(buf.data(), n, s.in_channels);
                return n;
            });
        }
    }
}

void EnsembleEngine::stop() {
    Impl& m = *impl_;
    m.io.stop_threads();
    // A stream whose device has gone is retired rather than closed here (closing may block).
    m.io.close_streams(system_, !m.io.input_lost);
}

// ---------------------------------------------------------------------------
// 3. Callbacks
// ---------------------------------------------------------------------------

void EnsembleEngine::capture(const float* in, std::size_t frames, int channels) noexcept {
    Impl& m = *impl_;
    m.io.count_callback();
    if (m.rings.empty()) return;
    const auto ch = static_cast<std::size_t>(std::max(1, channels));
    std::size_t done = 0;
    while (done < frames) {
        const std::size_t n = std::min(frames - done, kScratch);
        if (m.room_drone) m.room_drone->render(std::span<float>(m.room_scratch.data(), n));
        for (std::size_t p = 0; p < m.players; ++p) {
            float* s = m.cap_scratch.data();
            const auto c = static_cast<std::size_t>(m.channel_of[p]);
            if (c < ch) {
                const float* src = in + done * ch + c;
                for (std::size_t i = 0; i < n; ++i) s[i] = src[i * ch];
            } else {
                std::fill_n(s, n, 0.0f);  // not delivered: silence (reported by the silent-channel check)
            }
            if (m.room_drone) m.rooms[p]->process_add(std::span<const float>(m.room_scratch.data(), n), std::span<float>(s, n));
            m.rings[p]->write(std::span<const float>(s, n));
        }
        done += n;
    }
}

void EnsembleEngine::playback(float* out, std::size_t frames, int channels) noexcept { impl_->io.play(out, frames, channels); }

void EnsembleEngine::xrun(bool input_overflow, bool output_underflow) noexcept { impl_->io.count_xrun(input_overflow, output_underflow); }

// ---------------------------------------------------------------------------
// 4. Analysis
// ---------------------------------------------------------------------------

std::size_t EnsembleEngine::analyze_available() noexcept {
    Impl& m = *impl_;
    if (m.rings.empty() || !m.analyzer) return 0;
    if (pitch::EnsembleAnalyzer* fresh = m.pending.exchange(nullptr)) {
        pitch::EnsembleAnalyzer* old = m.analyzer.release();
        m.analyzer.reset(fresh);
        delete m.retired.exchange(old);  // normally empty: the control thread frees retired analyzers
    }
    DroneSettings ds;
    if (m.drone_for_analysis.read(ds) && cfg_.drone_removal) {
        for (auto& c : m.cancellers) {
            if (m.input_has_drone) {
                c->set_harmonics(ds.root_hz);
                c->set_level(1.0, true);
            } else {
                const std::size_t k = drone_partials(ds, m.rate, c->config().max_freq_hz, m.partials);
                c->set_partials(std::span<const DronePartial>(m.partials, k));
                c->set_level(ds.on ? drone_gain(ds.level_dbfs) : 0.0);
            }
        }
    }
    m.removal_active = cfg_.drone_removal && m.cancellers[0]->active();

    std::size_t total = 0;
    while (total < 8 * kChunk) {
        // The rings fill in lock-step; take what every one of them holds.
        std::size_t n = kChunk;
        for (const auto& r : m.rings) n = std::min(n, r->available());
        if (n == 0) break;
        for (std::size_t p = 0; p < m.players; ++p) {
            std::span<float> w(&m.work[p * kChunk], n);
            m.rings[p]->read(w);
            if (m.removal_active) m.cancellers[p]->process(w, w);
            m.trackers[p]->push(w);
        }
        m.analyzed.fetch_add(n, std::memory_order_relaxed);
        total += n;
        while (m.trackers[0]->pull(m.frames[0])) {
            for (std::size_t p = 1; p < m.players; ++p)
                if (!m.trackers[p]->pull(m.frames[p])) m.frames[p] = pitch::PitchFrame{m.frames[0].t_s, 0.0, 0.0};
            for (std::size_t p = 0; p < m.players; ++p) {
                pitch::PitchFrame& f = m.frames[p];
                DroneCanceller& c = *m.cancellers[p];
                if (m.removal_active && c.acquiring()) f.f0_hz = 0.0;
                if (m.removal_active && f.voiced() && c.is_residue(f.f0_hz, f.level_dbfs)) f.f0_hz = 0.0;
                if (m.removal_active && !m.input_has_drone) {
                    const double onset = f.t_s - 0.5 * m.span_s;
                    const auto now = static_cast<double>(m.analyzed.load(std::memory_order_relaxed));
                    c.set_voice(f.voiced(), static_cast<std::size_t>(std::max(0.0, now - onset * m.rate)));
                }
            }
            const auto idx = static_cast<std::int64_t>(std::llround(m.frames[0].t_s * m.rate));
            const pitch::EnsembleReading& r =
                m.analyzer->process(std::span<const pitch::PitchFrame>(m.frames.data(), m.players), idx);
            m.out.publish(r, static_cast<double>(static_cast<std::int64_t>(m.rings[0]->written()) - idx) / m.rate);
        }
    }
    if (total == 0 && m.io.producer_done.load(std::memory_order_acquire) && m.rings[0]->available() == 0) m.finished.store(true);
    return total;
}

StreamInfo EnsembleEngine::input_info() const { return impl_->io.in_info; }
bool EnsembleEngine::latest(pitch::EnsembleReading& out) { return impl_->out.latest.read(out); }
std::size_t EnsembleEngine::history(std::span<pitch::EnsembleReading> out) const { return impl_->out.history.read(out); }
std::size_t EnsembleEngine::take_readings(std::span<pitch::EnsembleReading> out) { return impl_->out.stream.read(out); }
double EnsembleEngine::stream_time_s() const {
    return impl_->rate > 0 ? static_cast<double>(impl_->analyzed.load()) / impl_->rate : 0.0;
}

EnsembleStatus EnsembleEngine::status() const {
    const Impl& m = *impl_;
    EnsembleStatus st;
    st.input = m.input;
    st.sample_rate_hz = m.rate;
    st.channels = m.in_channels;
    st.players = static_cast<int>(setup_.players.size());
    if (!m.rings.empty()) {
        st.captured_frames = m.rings[0]->written();
        st.ring_overflow_frames = m.rings[0]->overflow_samples();
        st.ring_overflow_events = m.rings[0]->overflow_events();
    }
    st.analyzed_frames = m.analyzed.load();
    m.io.report(st);
    for (const auto& t : m.trackers) st.tracker_dropped_frames += t->dropped_frames();
    m.out.report(st);
    st.input_ok = m.started && !m.io.input_lost && !m.finished.load();
    st.finished = m.finished.load();
    st.drone_removal_active = m.removal_active;
    return st;
}

// ---------------------------------------------------------------------------
// 5. Producers (the real-time ones live in start()); run_fast()
// ---------------------------------------------------------------------------

void EnsembleEngine::run_fast(const std::function<void(const pitch::EnsembleReading&)>& on_reading, double max_s) {
    Impl& m = *impl_;
    if (m.input != InputKind::file) throw Error("ensemble: --fast needs --input-file");
    start(false);
    const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
    const auto ch = static_cast<std::size_t>(m.in_channels);
    std::span<float> buf(m.prod_scratch.data(), block * ch);
    std::vector<pitch::EnsembleReading> got(64);
    m.io.run_fast<pitch::EnsembleReading>(
        buf, ch, static_cast<std::size_t>(0.2 * m.rate), std::span<pitch::EnsembleReading>(got), max_s, on_reading,
        [&m](std::span<float> b) { return m.read_file_block(b); },
        [this, &m](const float* data, std::size_t n) {
            capture(data, n, m.in_channels);
            analyze_available();
        },
        [this](std::span<pitch::EnsembleReading> g) { return take_readings(g); }, [this] { return stream_time_s(); });
    m.finished.store(true);
}

void EnsembleEngine::run_demo_frames(std::size_t frames) noexcept {
    Impl& m = *impl_;
    if (!m.demo || !m.started || m.io.analysis.joinable()) return;
    const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
    const auto ch = static_cast<std::size_t>(m.in_channels);
    while (frames > 0) {
        const std::size_t n = std::min(frames, block);
        std::span<float> buf(m.prod_scratch.data(), n * ch);
        m.demo->render(buf);
        capture(buf.data(), n, m.in_channels);
        analyze_available();
        frames -= n;
    }
}

// ---------------------------------------------------------------------------
// 6. Control
// ---------------------------------------------------------------------------

void EnsembleEngine::set_drone(const DroneSettings& s) {
    check_drone_settings(s);
    Impl& m = *impl_;
    drone_ = s;
    if (!m.started) return;
    if (m.io.out_drone) m.io.out_drone->set(s);
    if (m.room_drone) m.room_drone->set(s);
    m.drone_for_analysis.publish(s);
}

void EnsembleEngine::supervise() {
    Impl& m = *impl_;
    delete m.retired.exchange(nullptr);
    if (m.io.producer_failed.exchange(false)) say(m.io.producer_error);
    if (!m.started) return;
    // The device: callbacks must keep coming; a lost device is looked for
    // again every reopen_every_s, by name, with the same channels and rate.
    if (m.input == InputKind::device) {
        const auto now = Clock::now();
        if (!m.io.input_lost) {
            const bool stalled = m.io.stalled(now, cfg_.stall_s);
            if (stalled || !m.io.in_stream || !m.io.in_stream->alive() || (m.io.out_stream && !m.io.out_stream->alive())) {
                m.io.input_lost = true;
                say("input device '" + m.io.input_spec + "' stopped delivering audio; ensemble readings paused; trying to reopen it every " +
                    pitch::format_trimmed(cfg_.reopen_every_s, 1) + " s");
                m.io.retire_streams(*system_);
                m.last_try = now;
            }
        } else if (std::chrono::duration<double>(now - m.last_try).count() >= cfg_.reopen_every_s) {
            m.last_try = now;
            if (m.io.try_reopen(*system_, *this, now))
                say("input device '" + m.io.input_spec + "' is back (" + pitch::format_trimmed(m.io.in_stream->info().sample_rate_hz, 0) +
                    " Hz)");
        }
    }
    // The channels: one line whenever a player's channel becomes silent,
    // carries another's voice, or recovers.
    pitch::EnsembleReading r;
    if (m.out.history.count() == 0) return;
    const std::size_t got = m.out.history.read(std::span<pitch::EnsembleReading>(&r, 1));
    if (got == 0) return;
    for (std::size_t i = 0; i < setup_.players.size() && i < kMaxPlayers; ++i) {
        const pitch::PlayerReading& p = r.p[i];
        const pitch::PlayerState was = m.told[i];
        const bool bad = p.state == pitch::PlayerState::silent || p.state == pitch::PlayerState::copy;
        const bool was_bad = was == pitch::PlayerState::silent || was == pitch::PlayerState::copy;
        const std::string who = player_text(setup_.players[i], i);
        if (p.state == pitch::PlayerState::silent && was != pitch::PlayerState::silent) {
            say(who + " is silent while the others sound: check its microphone and cable");
        } else if (p.state == pitch::PlayerState::copy && (was != pitch::PlayerState::copy || m.told_copy[i] != p.copy_of)) {
            const std::size_t o = static_cast<std::size_t>(p.copy_of);
            const double d = r.p[o].level_dbfs - p.level_dbfs;
            std::string level = std::isfinite(d) && std::fabs(d) > 3.0
                                    ? "; it is " + pitch::format_trimmed(std::round(std::fabs(d)), 0) + " dB " + (d > 0 ? "quieter" : "louder")
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
