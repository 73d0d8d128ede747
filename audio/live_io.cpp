// LiveIo implementation: devices and streams, the playback fan-out, counters.
#include "audio/live_io.h"

#include "pitch/base/error.h"

namespace beatless::audio {

std::string_view input_kind_name(InputKind k) {
    switch (k) {
        case InputKind::none: return "none";
        case InputKind::device: return "device";
        case InputKind::demo: return "demo";
        case InputKind::file: return "file";
    }
    return "none";
}

void LiveIo::choose_output(AudioSystem* system, std::string_view spec, std::size_t block_len_frames) {
    if (!system) throw Error("no audio system for an output device");
    const auto devs = system->devices();
    const int out = choose_device(devs, spec, Direction::output);
    request.output_device = out;
    request.block_len_frames = block_len_frames;
    for (const auto& d : devs)
        if (d.index == out) output_spec = d.name;
    want_output = true;
}

const StreamInfo& LiveIo::open_input(AudioSystem& system, StreamCallbacks& cb) {
    StreamRequest rq = request;
    if (!duplex()) rq.output_device = -1;
    in_stream = system.open(rq, cb);
    in_info = in_stream->info();
    request.sample_rate_hz = in_info.sample_rate_hz;  // reopen at the same rate
    if (duplex()) out_info = in_info;
    return in_info;
}

void LiveIo::open_output(AudioSystem* system, StreamCallbacks& cb, double sample_rate_hz, const DroneSettings& drone) {
    if (!want_output) return;
    if (!in_stream || request.output_device != request.input_device) {
        StreamRequest rq = request;
        rq.input_device = -1;
        rq.sample_rate_hz = sample_rate_hz;
        out_stream = system->open(rq, cb);
        out_info = out_stream->info();
    }
    out_drone = std::make_unique<Drone>(out_info.sample_rate_hz);
    out_drone->set(drone);
}

bool LiveIo::try_reopen(AudioSystem& system, StreamCallbacks& cb, Clock::time_point now) {
    try {
        system.rescan();
        const auto devs = system.devices();
        StreamRequest rq = request;
        rq.input_device = choose_device(devs, input_spec, Direction::input);
        if (want_output) rq.output_device = choose_device(devs, output_spec, Direction::output);
        const bool as_duplex = want_output && rq.output_device == rq.input_device;
        StreamRequest in_rq = rq;
        if (!as_duplex) in_rq.output_device = -1;
        auto in = system.open(in_rq, cb);
        std::unique_ptr<Stream> out;
        if (want_output && !as_duplex) {
            StreamRequest out_rq = rq;
            out_rq.input_device = -1;
            out = system.open(out_rq, cb);
        }
        request = rq;
        request.output_device = want_output ? rq.output_device : -1;
        in_stream = std::move(in);
        out_stream = std::move(out);
        input_lost = false;
        watch_from(now);
        return true;
    } catch (const Error&) {
        return false;  // still gone; the caller tries again later
    }
}

void LiveIo::close_streams(AudioSystem* system, bool usable) {
    for (auto* s : {&in_stream, &out_stream}) {
        if (!*s) continue;
        if (usable && (*s)->alive())
            s->reset();
        else
            system->retire(std::move(*s));
    }
}

void LiveIo::retire_streams(AudioSystem& system) {
    if (in_stream) system.retire(std::move(in_stream));  // closing a dead stream may never return
    if (out_stream) system.retire(std::move(out_stream));
}

void LiveIo::count_xrun(bool input_overflow, bool output_underflow) noexcept {
    if (input_overflow) dev_overflows.fetch_add(1, std::memory_order_relaxed);
    if (output_underflow) dev_underflows.fetch_add(1, std::memory_order_relaxed);
}

void LiveIo::play(float* out, std::size_t frames, int channels) noexcept {
    const auto ch = static_cast<std::size_t>(std::max(1, channels));
    if (!out_drone || play_scratch.empty()) {
        std::fill_n(out, frames * ch, 0.0f);
        return;
    }
    std::size_t done = 0;
    while (done < frames) {
        const std::size_t n = std::min(frames - done, play_scratch.size());
        std::span<float> s(play_scratch.data(), n);
        out_drone->render(s);
        for (std::size_t i = 0; i < n; ++i)
            for (std::size_t c = 0; c < ch; ++c) out[(done + i) * ch + c] = s[i];
        done += n;
    }
}

void LiveIo::watch_from(Clock::time_point now) {
    seen_at = now;
    seen_callbacks = callbacks.load();
    heard_since_open = false;
}

bool LiveIo::stalled(Clock::time_point now, double stall_s, double first_callback_s) {
    const std::uint64_t cb = callbacks.load();
    if (cb != seen_callbacks) {
        seen_callbacks = cb;
        seen_at = now;
        heard_since_open = true;
    }
    return std::chrono::duration<double>(now - seen_at).count() > (heard_since_open ? stall_s : first_callback_s);
}

void LiveIo::report(LiveStatus& st) const {
    st.device_input_overflows = dev_overflows.load();
    st.device_output_underflows = dev_underflows.load();
}

void LiveIo::stop_threads() {
    running.store(false);
    if (producer.joinable()) producer.join();
    if (analysis.joinable()) analysis.join();
}

}  // namespace beatless::audio
