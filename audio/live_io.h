// LiveIo — the engine's stream plumbing: devices and streams (one duplex stream when input and
// output are the same device), the drone fanned out to the outputs, the callback counters and the
// watchdog's stall check, the analysis and paced producer threads, run_fast(), and ReadingOutlet
// (readings published lock-free: latest, recent, stream).
// Thread: setup and control from the engine's control thread; the ones marked so in the callbacks.
#pragma once

#include "audio/device.h"
#include "audio/drone.h"
#include "audio/latest.h"
#include "audio/ring.h"
#include "pitch/base/error.h"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

namespace beatless::audio {

enum class InputKind { none, device, demo, file };

std::string_view input_kind_name(InputKind k);

// The status fields of the stream layer (EngineStatus adds the analysis's).
struct LiveStatus {
    InputKind input = InputKind::none;
    double sample_rate_hz = 0.0;  // analysis rate
    std::uint64_t ring_overflow_events = 0;
    std::uint64_t device_input_overflows = 0;    // reported by the host
    std::uint64_t device_output_underflows = 0;  // reported by the host
    std::uint64_t tracker_dropped_frames = 0;
    std::uint64_t readings = 0;          // published
    std::uint64_t readings_dropped = 0;  // not taken from the stream in time
    double latency_s = 0.0;              // last input-to-reading latency (sound at t captured -> its reading published)
    double latency_max_s = 0.0;          // largest since start
    bool input_ok = false;               // input delivering audio
    bool finished = false;               // a file played and analyzed to its end
    bool drone_removal_active = false;
};

// Readings published lock-free: the newest (latest wins), a short history
// for the trace, and a stream of every reading (dropped and counted when
// nobody takes them). Thread: publish() from the analysis; the readers as
// Latest, History and SpscRing say. Allocates: only in the constructor.
template <class R, std::size_t HistoryLen>
struct ReadingOutlet {
    explicit ReadingOutlet(std::size_t stream_len) : stream(stream_len) {}

    Latest<R> latest;
    Recent<R, HistoryLen> history;
    SpscRing<R> stream;
    std::atomic<std::uint64_t> readings{0};
    std::atomic<double> latency_s{0.0}, latency_max_s{0.0};

    // lat_s: from the sound's capture to now. Thread: analysis. Allocates: no. Locks: no.
    void publish(const R& r, double lat_s) noexcept {
        latency_s.store(lat_s, std::memory_order_relaxed);
        if (lat_s > latency_max_s.load(std::memory_order_relaxed))
            latency_max_s.store(lat_s, std::memory_order_relaxed);
        latest.publish(r);
        history.publish(r);
        stream.write(std::span<const R>(&r, 1));
        readings.fetch_add(1, std::memory_order_release);
    }

    // Fills readings, readings_dropped and the latencies. Thread: any.
    void report(LiveStatus& st) const {
        st.readings = readings.load();
        st.readings_dropped = stream.overflow_samples();
        st.latency_s = latency_s.load();
        st.latency_max_s = latency_max_s.load();
    }
};

// Devices, streams, callback counters, drone output and threads. Setup and
// control functions run on the engine's control thread; the ones marked
// so run in the audio callback.
struct LiveIo {
    using Clock = std::chrono::steady_clock;

    // Devices.
    StreamRequest request;                          // what was opened (for reopening)
    std::string input_spec, output_spec;            // names, re-resolved after a rescan
    std::unique_ptr<Stream> in_stream, out_stream;  // out_stream empty for duplex
    bool want_output = false;
    bool input_lost = false;
    StreamInfo in_info, out_info;

    // What the callbacks count, and what the watchdog last saw of them.
    std::atomic<std::uint64_t> callbacks{0};
    std::atomic<std::uint64_t> dev_overflows{0}, dev_underflows{0};
    std::uint64_t seen_callbacks = 0;
    Clock::time_point seen_at{};
    bool heard_since_open = false;  // a callback came since the stream was (re)opened

    // The drone's output (playback callback).
    std::unique_ptr<Drone> out_drone;
    std::vector<float> play_scratch;  // its length is the largest chunk rendered at once

    // Threads; a demo or file producer and what it reports.
    std::thread analysis, producer;
    std::atomic<bool> running{false};
    std::atomic<bool> producer_done{false};
    std::atomic<bool> producer_failed{false};
    std::string producer_error;  // set by the producer, reported by supervise()

    // --- Setup ---------------------------------------------------------------
    // Chooses the output device (the drone plays there). Throws Error.
    void choose_output(AudioSystem* system, std::string_view spec, std::size_t block_len_frames);
    bool duplex() const { return want_output && request.output_device == request.input_device; }
    // Opens the input stream (duplex when the output is the same device),
    // keeps its rate in the request for reopening. Throws Error.
    const StreamInfo& open_input(AudioSystem& system, StreamCallbacks& callbacks);
    // When an output is wanted: opens its own stream unless the input is
    // duplex (asking for sample_rate_hz), and the drone at the output's rate.
    void open_output(AudioSystem* system, StreamCallbacks& callbacks, double sample_rate_hz,
                     const DroneSettings& drone);
    // Closes both streams; a stream that is not usable (or whose device has
    // gone) is retired instead, as closing it may block.
    void close_streams(AudioSystem* system, bool usable);
    void retire_streams(AudioSystem& system);
    // After the device was lost (and its streams retired): rescans, finds
    // the devices again by name and opens the streams as before. True when
    // they are open again (input_lost cleared, the watchdog restarted);
    // false, with nothing changed, while the device is still gone.
    bool try_reopen(AudioSystem& system, StreamCallbacks& callbacks, Clock::time_point now);

    // --- Callbacks -------------------------------------------------------------
    // Thread: audio callback. Allocates: no. Locks: no.
    void count_callback() noexcept { callbacks.fetch_add(1, std::memory_order_relaxed); }
    void count_xrun(bool input_overflow, bool output_underflow) noexcept;
    // The drone (silence without one) on every one of `channels` interleaved channels.
    void play(float* out, std::size_t frames, int channels) noexcept;

    // --- Watchdog ------------------------------------------------------------
    // Restarts the watch when a stream has just been (re)opened.
    void watch_from(Clock::time_point now);
    // True when no callback came for longer than stall_s (up to now), or, before
    // the first callback since the stream was opened, for longer than first_callback_s.
    bool stalled(Clock::time_point now, double stall_s, double first_callback_s);
    void report(LiveStatus& st) const;  // the host's overflow and underflow counts

    // --- Threads ---------------------------------------------------------------
    // Sets running; the analysis thread calls analyze() until stop_threads(),
    // sleeping 1 ms whenever it returns 0.
    template <class Analyze>
    void start_analysis(Analyze analyze) {
        analysis = std::thread([this, analyze] {
            while (running.load(std::memory_order_acquire))
                if (analyze() == 0) std::this_thread::sleep_for(std::chrono::microseconds(1000));
        });
    }
    // A producer thread at real-time pace: produce() captures up to
    // block_frames frames and returns how many (0 ends it); the thread then
    // sleeps until that much audio has played at rate_hz.
    template <class Produce>
    void start_producer(std::size_t block_frames, double rate_hz, Produce produce) {
        producer = std::thread([this, block_frames, rate_hz, produce] {
            const auto period = std::chrono::duration<double>(static_cast<double>(block_frames) / rate_hz);
            auto next = Clock::now();
            while (running.load(std::memory_order_acquire)) {
                const std::size_t n = produce();
                if (n == 0) break;
                next += std::chrono::duration_cast<Clock::duration>(
                    period * (static_cast<double>(n) / static_cast<double>(block_frames)));
                std::this_thread::sleep_until(next);
            }
        });
    }
    void stop_threads();  // clears running, joins the producer, then the analysis

    // Copies the block read() returns into buf (as much as fits) and returns
    // the count; 0 at the end or on an Error from read(), whose message is
    // kept for supervise(). Either way producer_done is set on 0.
    template <class Read>
    std::size_t read_block(std::span<float> buf, Read read);

    // run_fast(): a file through capture and analysis as fast as possible,
    // in the calling thread, then tail_frames of silence to flush the
    // trackers. read(buf) fills interleaved frames of `channels` through
    // read_block() and returns the frame count (0 at the end; a read error
    // is thrown here); feed(data, frames) captures and analyzes them;
    // take(got) drains the readings; every reading up to max_s (0 = all)
    // goes to on_reading; it ends early once time_s() passes max_s + 0.2 s.
    template <class R, class Read, class Feed, class Take, class Time>
    void run_fast(std::span<float> buf, std::size_t channels, std::size_t tail_frames, std::span<R> got, double max_s,
                  const std::function<void(const R&)>& on_reading, Read read, Feed feed, Take take, Time time_s);
};

template <class Read>
std::size_t LiveIo::read_block(std::span<float> buf, Read read) {
    std::size_t n = 0;
    try {
        const std::span<const float> b = read();
        n = std::min(b.size(), buf.size());
        std::copy_n(b.begin(), n, buf.begin());
    } catch (const Error& e) {
        producer_error = e.what();
        producer_failed.store(true);
        n = 0;
    }
    if (n == 0) producer_done.store(true);
    return n;
}

template <class R, class Read, class Feed, class Take, class Time>
void LiveIo::run_fast(std::span<float> buf, std::size_t channels, std::size_t tail_frames, std::span<R> got,
                      double max_s, const std::function<void(const R&)>& on_reading, Read read, Feed feed, Take take,
                      Time time_s) {
    const std::size_t block = buf.size() / channels;
    std::size_t tail = tail_frames;
    while (true) {
        std::size_t n = read(buf);
        if (producer_failed.load()) throw Error(producer_error);
        if (n == 0) {
            if (tail == 0) break;
            n = std::min(tail, block);
            std::fill_n(buf.begin(), n * channels, 0.0f);
            tail -= n;
        }
        feed(buf.data(), n);
        for (std::size_t k; (k = take(got)) > 0;)
            for (std::size_t i = 0; i < k; ++i)
                if (max_s <= 0.0 || got[i].t_s <= max_s) on_reading(got[i]);
        if (max_s > 0.0 && time_s() >= max_s + 0.2) break;
    }
}

}  // namespace beatless::audio
