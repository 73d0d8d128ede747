// Engine implementation.
//
// Index
//   1. State         — Impl: ring, tracker, canceller, publication, counters
//   2. Setup         — devices, demo, file, readings, start and stop
//   3. Callbacks     — capture, playback, xrun (real-time rules apply)
//   4. Analysis      — analyze_available(): ring -> removal -> YIN -> readings
//   5. Producers     — demo and file at real-time pace, run_fast()
//   6. Control       — drone, root, reference voice, supervise()
#include "audio/engine.h"

#include "audio/soundfile.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/yin.h"

#include <algorithm>
#include <chrono>
#include <cmath>

namespace beatless::audio {

namespace {
constexpr std::size_t kChunk = 1024;          // analysis reads at most this much per step
constexpr std::size_t kScratch = 8192;        // callback scratch (frames per call beyond this are chunked)
constexpr std::size_t kHistoryLen = 1024;     // ~5 s of readings at a 5 ms hop
constexpr std::size_t kStreamLen = 8192;      // readings waiting for take_readings()
constexpr std::size_t kMaxDronePartials = 256;
using Clock = std::chrono::steady_clock;
}  // namespace

// ---------------------------------------------------------------------------
// 1. State
// ---------------------------------------------------------------------------

struct Engine::Impl {
    InputKind input = InputKind::none;
    double rate = 0.0;

    // Devices, streams, callback counters, the drone's output, threads.
    LiveIo io;
    bool output_lost = false;
    Clock::time_point last_try{};         // the last attempt to reopen

    // Sources other than a device.
    std::unique_ptr<DemoPerformer> demo;
    std::unique_ptr<Drone> room_drone;    // what the demo's microphone hears of the drone
    std::unique_ptr<SimulatedRoom> room;
    std::unique_ptr<SoundReader> file;
    std::string file_path;
    bool input_has_drone = false;

    // Ring and analysis.
    std::unique_ptr<SpscRing<float>> ring;
    std::vector<float> cap_scratch, room_scratch, prod_scratch, work;
    std::unique_ptr<pitch::YinTracker> tracker;
    std::unique_ptr<DroneCanceller> canceller;
    Latest<DroneSettings> drone_for_analysis;
    DronePartial partials[kMaxDronePartials];
    std::unique_ptr<pitch::ReadingMaker> maker;
    std::atomic<pitch::ReadingMaker*> pending_maker{nullptr};
    std::atomic<pitch::ReadingMaker*> retired_maker{nullptr};
    std::atomic<double> root_hz{110.0};
    double applied_root = 0.0;
    double span_s = 0.05;                 // the tracker's span
    bool removal_active = false;
    bool started = false;

    // Publication.
    ReadingOutlet<pitch::Reading, kHistoryLen> out{kStreamLen};
    std::atomic<std::uint64_t> analyzed{0};
    std::atomic<bool> finished{false};
    std::atomic<double> current_target_hz{0.0};

    // Next block of the file (mono), 0 at its end or on a read error (kept for supervise()).
    std::size_t read_file_block(std::span<float> buf) {
        return io.read_block(buf, [this] { return file->read(); });
    }
};

// ---------------------------------------------------------------------------
// 2. Setup
// ---------------------------------------------------------------------------

Engine::Engine(const EngineConfig& config, AudioSystem* system) : cfg_(config), system_(system), impl_(std::make_unique<Impl>()) {
    impl_->cap_scratch.assign(kScratch, 0.0f);
    impl_->room_scratch.assign(kScratch, 0.0f);
    impl_->io.play_scratch.assign(kScratch, 0.0f);
    impl_->prod_scratch.assign(kScratch, 0.0f);
    impl_->work.assign(kChunk, 0.0f);
}

Engine::~Engine() {
    stop();
    delete impl_->pending_maker.exchange(nullptr);
    delete impl_->retired_maker.exchange(nullptr);
}

void Engine::open_input_device(std::string_view spec) {
    if (!system_) throw Error(std::string("no audio system for an input device (") + kDemoHint + ")");
    Impl& m = *impl_;
    const auto devs = system_->devices();
    const int in = choose_device(devs, spec, Direction::input);
    m.io.request.input_device = in;
    m.io.request.sample_rate_hz = cfg_.sample_rate_hz;
    m.io.request.block_len_frames = cfg_.block_len_frames;
    for (const auto& d : devs)
        if (d.index == in) m.io.input_spec = d.name;
    m.input = InputKind::device;
}

void Engine::open_output_device(std::string_view spec) { impl_->io.choose_output(system_, spec, cfg_.block_len_frames); }

void Engine::use_demo(DemoConfig demo) {
    Impl& m = *impl_;
    if (demo.sample_rate_hz <= 0.0) demo.sample_rate_hz = cfg_.sample_rate_hz > 0.0 ? cfg_.sample_rate_hz : 48000.0;
    m.demo = std::make_unique<DemoPerformer>(demo);
    m.input = InputKind::demo;
}

double Engine::use_file(const std::string& path) {
    Impl& m = *impl_;
    m.file = std::make_unique<SoundReader>(path, -1, std::min(cfg_.block_len_frames, kScratch));
    m.file_path = path;
    m.input = InputKind::file;
    return m.file->info().sample_rate_hz;
}

void Engine::set_input_has_drone(bool on) { impl_->input_has_drone = on; }

void Engine::set_readings(const pitch::ReadingConfig& config, pitch::TargetSet targets) {
    Impl& m = *impl_;
    auto maker = std::make_unique<pitch::ReadingMaker>(config, std::move(targets));
    m.root_hz.store(config.root_hz);
    drone_.root_hz = config.root_hz;
    delete m.retired_maker.exchange(nullptr);
    if (!m.started) {
        m.maker = std::move(maker);
        return;
    }
    delete m.pending_maker.exchange(maker.release());
}

void Engine::start(bool analysis_thread) {
    Impl& m = *impl_;
    if (m.started) return;
    if (!m.maker) throw Error("engine: readings are not set up (no root or targets)");
    // Open the streams: one duplex stream when input and output share a device.
    if (m.input == InputKind::device) {
        m.rate = m.io.open_input(*system_, *this).sample_rate_hz;
    } else if (m.input == InputKind::demo) {
        m.rate = m.demo->config().sample_rate_hz;
    } else if (m.input == InputKind::file) {
        m.rate = m.file->info().sample_rate_hz;
    } else {
        throw Error("engine: no input chosen (a device, --demo or --input-file)");
    }
    rate_hz_ = m.rate;
    // Everything the analysis needs, sized once.
    m.ring = std::make_unique<SpscRing<float>>(static_cast<std::size_t>(cfg_.ring_s * m.rate));
    pitch::YinConfig yc;
    yc.sample_rate_hz = m.rate;
    yc.hop_s = cfg_.hop_s;
    // Live input favours a short span (a step settles within 40 ms); a file
    // favours the longer span's accuracy and range.
    const bool live = m.input != InputKind::file;
    yc.f_min_hz = cfg_.f_min_hz > 0.0 ? cfg_.f_min_hz : live ? kLiveLowestHz : 55.0;
    yc.f_max_hz = cfg_.f_max_hz;
    yc.max_block_len_samples = kChunk * 4;
    // 30 ms live, 50 ms for a file, or the shortest span that holds two
    // periods of a lower f_min (a cello's C string, a double bass: those
    // readings settle later).
    yc.span_s = cfg_.span_s > 0.0 ? cfg_.span_s : std::max(live ? 0.030 : 0.050, pitch::YinTracker::min_span_s(yc));
    m.span_s = yc.span_s;
    // The vibrato correction waits three hops for a frame's right neighbours:
    // worth it for a file, not for the live settling bar.
    yc.vibrato_correction = !live;
    m.tracker = std::make_unique<pitch::YinTracker>(yc);
    CancellerConfig cc = cfg_.canceller;
    cc.sample_rate_hz = m.rate;
    if (m.input_has_drone) {
        // A recording: the voice may sound from the first sample, so there is
        // no silent moment to learn the room in; one notch width throughout.
        cc.bandwidth_hz = cc.quiet_bandwidth_hz = cc.recording_bandwidth_hz;
    }
    m.canceller = std::make_unique<DroneCanceller>(cc);
    if (m.input == InputKind::demo) {
        m.room_drone = std::make_unique<Drone>(m.rate);
        RoomConfig rc = cfg_.demo_room;
        rc.sample_rate_hz = m.rate;
        m.room = std::make_unique<SimulatedRoom>(rc);
        m.room_drone->set(drone_);
    }
    m.io.open_output(system_, *this, m.input == InputKind::device ? m.rate : cfg_.sample_rate_hz, drone_);
    m.drone_for_analysis.publish(drone_);
    m.applied_root = 0.0;
    m.started = true;
    m.io.seen_at = Clock::now();
    m.io.running.store(true);
    if (analysis_thread) {
        m.io.start_analysis([this] { return analyze_available(); });
        if (m.input == InputKind::demo || m.input == InputKind::file) {
            const std::size_t block = std::min(cfg_.block_len_frames, kScratch);
            m.io.start_producer(block, m.rate, [this, block]() -> std::size_t {
                Impl& s = *impl_;
                std::span<float> buf(s.prod_scratch.data(), block);
                std::size_t n = block;
                if (s.demo) s.demo->render(buf);
                else n = s.read_file_block(buf);
                if (n > 0) capture(buf.data(), n, 1);
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
    const std::uint64_t before = m.io.callbacks.load();
    bool flowing = true;
    if (m.input == InputKind::device) {
        std::this_thread::sleep_for(std::chrono::milliseconds(60));
        flowing = m.io.callbacks.load() != before;
    }
    m.io.close_streams(system_, flowing);
}

// ---------------------------------------------------------------------------
// 3. Callbacks
// ---------------------------------------------------------------------------

void Engine::capture(const float* in, std::size_t frames, int channels) noexcept {
    Impl& m = *impl_;
    m.io.count_callback();
    if (!m.ring) return;
    const auto ch = static_cast<std::size_t>(std::max(1, channels));
    std::size_t done = 0;
    while (done < frames) {
        const std::size_t n = std::min(frames - done, kScratch);
        float* s = m.cap_scratch.data();
        if (ch == 1) {
            std::copy_n(in + done, n, s);
        } else {
            for (std::size_t i = 0; i < n; ++i) s[i] = in[(done + i) * ch];
        }
        // The demo's microphone also hears the drone through its room.
        if (m.room_drone) {
            std::span<float> spk(m.room_scratch.data(), n);
            m.room_drone->render(spk);
            m.room->process_add(spk, std::span<float>(s, n));
        }
        m.ring->write(std::span<const float>(s, n));
        done += n;
    }
}

void Engine::playback(float* out, std::size_t frames, int channels) noexcept { impl_->io.play(out, frames, channels); }

void Engine::xrun(bool input_overflow, bool output_underflow) noexcept { impl_->io.count_xrun(input_overflow, output_underflow); }

// ---------------------------------------------------------------------------
// 4. Analysis
// ---------------------------------------------------------------------------

std::size_t Engine::analyze_available() noexcept {
    Impl& m = *impl_;
    if (!m.ring || !m.maker) return 0;
    if (pitch::ReadingMaker* fresh = m.pending_maker.exchange(nullptr)) {
        pitch::ReadingMaker* old = m.maker.release();
        m.maker.reset(fresh);
        m.applied_root = 0.0;
        delete m.retired_maker.exchange(old);  // normally empty: the control thread frees retired makers
    }
    const double root = m.root_hz.load(std::memory_order_acquire);
    if (root != m.applied_root) {
        m.applied_root = root;
        m.maker->set_root_hz(root);
        if (m.input_has_drone && cfg_.drone_removal) {
            m.canceller->set_harmonics(root);
            m.canceller->set_level(1.0, true);
        }
    }
    DroneSettings ds;
    if (m.drone_for_analysis.read(ds) && cfg_.drone_removal && !m.input_has_drone) {
        const std::size_t n = drone_partials(ds, m.rate, m.canceller->config().max_freq_hz, m.partials);
        m.canceller->set_partials(std::span<const DronePartial>(m.partials, n));
        m.canceller->set_level(ds.on ? drone_gain(ds.level_dbfs) : 0.0);
    }
    m.removal_active = cfg_.drone_removal && m.canceller->active();

    std::size_t total = 0;
    while (total < 8 * kChunk) {
        std::span<float> work(m.work.data(), kChunk);
        const std::size_t n = m.ring->read(work);
        if (n == 0) break;
        work = work.first(n);
        if (m.removal_active) m.canceller->process(work, work);
        m.tracker->push(work);
        m.analyzed.fetch_add(n, std::memory_order_relaxed);
        total += n;
        pitch::PitchFrame f;
        while (m.tracker->pull(f)) {
            const auto idx = static_cast<std::int64_t>(std::llround(f.t_s * m.rate));
            // While drone removal is still learning the room (a quarter of a
            // second after the drone starts or moves), the drone may leak
            // through: those frames are reported unvoiced.
            if (m.removal_active && m.canceller->acquiring()) f.f0_hz = 0.0;
            // What is left of the drone after removal (a real room is never
            // quite linear and still): quiet, and at the drone's own pitch.
            if (m.removal_active && f.voiced() && m.canceller->is_residue(f.f0_hz, f.level_dbfs)) f.f0_hz = 0.0;
            const std::uint64_t notes_before = m.maker->notes_started();
            const pitch::Reading r = m.maker->make(f, idx);
            if (m.removal_active && !m.input_has_drone) {
                // Tell drone removal whether the performer sounds, and since when.
                const double onset = f.t_s - 0.5 * m.span_s;
                const auto now = static_cast<double>(m.analyzed.load(std::memory_order_relaxed));
                m.canceller->set_voice(f.voiced(), static_cast<std::size_t>(std::max(0.0, now - onset * m.rate)));
                if (m.maker->notes_started() != notes_before) m.canceller->new_note();
            }
            if (r.target_index >= 0) m.current_target_hz.store(r.root_hz * std::exp2(r.target_cents / 1200.0), std::memory_order_relaxed);
            m.out.publish(r, static_cast<double>(static_cast<std::int64_t>(m.ring->written()) - idx) / m.rate);
        }
    }
    if (total == 0 && m.io.producer_done.load(std::memory_order_acquire) && m.ring->available() == 0) m.finished.store(true);
    return total;
}

StreamInfo Engine::input_info() const { return impl_->io.in_info; }
StreamInfo Engine::output_info() const { return impl_->io.out_info; }

bool Engine::latest(pitch::Reading& out) { return impl_->out.latest.read(out); }
std::size_t Engine::history(std::span<pitch::Reading> out) const { return impl_->out.history.read(out); }
std::size_t Engine::take_readings(std::span<pitch::Reading> out) { return impl_->out.stream.read(out); }
double Engine::stream_time_s() const { return impl_->rate > 0 ? static_cast<double>(impl_->analyzed.load()) / impl_->rate : 0.0; }

EngineStatus Engine::status() const {
    const Impl& m = *impl_;
    EngineStatus st;
    st.input = m.input;
    st.sample_rate_hz = m.rate;
    st.captured_samples = m.ring ? m.ring->written() : 0;
    st.analyzed_samples = m.analyzed.load();
    st.ring_overflow_samples = m.ring ? m.ring->overflow_samples() : 0;
    st.ring_overflow_events = m.ring ? m.ring->overflow_events() : 0;
    m.io.report(st);
    st.tracker_dropped_frames = m.tracker ? m.tracker->dropped_frames() : 0;
    m.out.report(st);
    st.tracker_delay_s = m.tracker ? m.tracker->delay_s() : 0.0;
    st.device_input_latency_s = m.io.in_info.input_latency_s;
    st.device_output_latency_s = m.io.out_info.output_latency_s;
    st.input_ok = m.started && !m.io.input_lost && !m.finished.load();
    st.output_ok = !m.io.want_output || (m.started && !m.output_lost);
    st.finished = m.finished.load();
    st.drone_removal_active = m.removal_active;
    return st;
}

// ---------------------------------------------------------------------------
// 5. Producers (the real-time ones live in start()); run_fast()
// ---------------------------------------------------------------------------

void Engine::run_fast(const std::function<void(const pitch::Reading&)>& on_reading, double max_s) {
    Impl& m = *impl_;
    if (m.input != InputKind::file) throw Error("engine: --fast needs --input-file");
    start(false);
    std::span<float> buf(m.prod_scratch.data(), std::min(cfg_.block_len_frames, kScratch));
    pitch::Reading got[256];
    m.io.run_fast<pitch::Reading>(
        buf, 1, static_cast<std::size_t>(0.2 * m.rate), std::span<pitch::Reading>(got), max_s, on_reading,
        [&m](std::span<float> b) { return m.read_file_block(b); },
        [this](const float* data, std::size_t n) {
            capture(data, n, 1);
            analyze_available();
        },
        [this](std::span<pitch::Reading> g) { return take_readings(g); }, [this] { return stream_time_s(); });
    m.finished.store(true);
}

// ---------------------------------------------------------------------------
// 6. Control
// ---------------------------------------------------------------------------

void Engine::set_drone(const DroneSettings& s) {
    check_drone_settings(s);
    Impl& m = *impl_;
    drone_ = s;
    m.root_hz.store(s.root_hz);
    if (!m.started) return;
    if (m.io.out_drone) m.io.out_drone->set(s);
    if (m.room_drone) m.room_drone->set(s);
    m.drone_for_analysis.publish(s);
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
    if (!(dur_s >= 0.1 && dur_s <= 30.0)) throw Error("tone length " + pitch::format_trimmed(dur_s, 3) + " s: out of range (0.1 to 30 s)");
    DroneSettings s = drone_;
    s.reference_hz = freq_hz;
    s.reference_s = dur_s;
    ++s.reference_count;
    set_drone(s);
}

void Engine::supervise() {
    Impl& m = *impl_;
    if (m.io.producer_failed.exchange(false)) say(m.io.producer_error);
    if (!m.started || m.input != InputKind::device) {
        if (m.started && m.io.want_output && !m.output_lost && m.io.out_stream && !m.io.out_stream->alive()) {
            m.output_lost = true;
            say("output device '" + m.io.output_spec + "' stopped; the drone is silent");
        }
        return;
    }
    const auto now = Clock::now();
    const bool stalled = m.io.stalled(now, cfg_.stall_s);
    const bool dead = !m.io.in_stream || !m.io.in_stream->alive() || (m.io.out_stream && !m.io.out_stream->alive()) || stalled;
    if (dead && !m.io.input_lost) {
        m.io.input_lost = true;
        m.output_lost = m.io.want_output;
        say("input device '" + m.io.input_spec + "' stopped delivering audio; readings paused" +
            std::string(m.io.want_output ? ", drone stopped" : "") + "; trying to reopen it every " +
            pitch::format_trimmed(cfg_.reopen_every_s, 1) + " s");
        m.io.retire_streams(*system_);
        m.last_try = Clock::now();
        return;
    }
    if (!m.io.input_lost || std::chrono::duration<double>(now - m.last_try).count() < cfg_.reopen_every_s) return;
    m.last_try = now;
    if (!m.io.try_reopen(*system_, *this, now)) return;  // still gone; try again later
    m.output_lost = false;
    say("input device '" + m.io.input_spec + "' is back (" + pitch::format_trimmed(m.io.in_stream->info().sample_rate_hz, 0) + " Hz)");
}

}  // namespace beatless::audio
