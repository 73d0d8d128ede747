// PulseAudio devices: listing with a deadline, one threaded mainloop per stream.
//
// Index: [SECTION] Connection, [SECTION] Listing, [SECTION] Stream, [SECTION] System.
#include "audio/pulse_device.h"
#include "audio/stream_request.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <pulse/pulseaudio.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <string>
#include <thread>
#include <vector>

namespace beatless::audio {

namespace {

using Clock = std::chrono::steady_clock;
constexpr double kConnectTimeout_s = 2.0;  // a local server answers in milliseconds
constexpr double kStreamTimeout_s = 3.0;

// [SECTION] Connection

bool context_settled(pa_context_state_t s) {
    return s == PA_CONTEXT_READY || s == PA_CONTEXT_FAILED || s == PA_CONTEXT_TERMINATED;
}

// "PulseAudio" for a PulseAudio server, "PipeWire" for PipeWire's pulse server.
std::string host_name_of(const char* server_name) {
    const std::string s = server_name ? server_name : "";
    return s.find("PipeWire") != std::string::npos ? "PipeWire" : kPulseHostApi;
}

// [SECTION] Listing

struct Listing {
    bool ready = false;
    int pending = 0;
    std::string host = kPulseHostApi;
    std::string default_source, default_sink;
    std::vector<DeviceInfo> sources, sinks;
};

void on_server_info(pa_context*, const pa_server_info* i, void* u) {
    auto* l = static_cast<Listing*>(u);
    if (i) {
        l->host = host_name_of(i->server_name);
        l->default_source = i->default_source_name ? i->default_source_name : "";
        l->default_sink = i->default_sink_name ? i->default_sink_name : "";
    }
    --l->pending;
}

// One source or sink of a listing (pa_source_info or pa_sink_info).
template <class Info, bool Source>
void on_device(pa_context*, const Info* i, int eol, void* u) {
    auto* l = static_cast<Listing*>(u);
    if (eol) {
        --l->pending;
        return;
    }
    if (!i || !i->name) return;
    DeviceInfo d;
    d.name = i->name;
    d.description = i->description ? i->description : "";
    (Source ? d.max_input_channels : d.max_output_channels) = i->sample_spec.channels;
    d.default_rate_hz = i->sample_spec.rate;
    (Source ? l->sources : l->sinks).push_back(std::move(d));
}

// Sources then sinks, each sorted by name, so the same server state lists the
// same way every time (the server's own indices change when it restarts).
std::vector<DeviceInfo> list_server() {
    Listing l;
    pa_mainloop* ml = pa_mainloop_new();
    if (!ml) return {};
    pa_context* ctx = pa_context_new(pa_mainloop_get_api(ml), "Beatless");
    const auto deadline =
        Clock::now() + std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(kConnectTimeout_s));
    auto run_until = [&](auto done) {
        while (!done() && Clock::now() < deadline) {
            if (pa_mainloop_prepare(ml, 20000) < 0 || pa_mainloop_poll(ml) < 0 || pa_mainloop_dispatch(ml) < 0)
                return false;
        }
        return done();
    };
    if (ctx && pa_context_connect(ctx, nullptr, PA_CONTEXT_NOAUTOSPAWN, nullptr) >= 0 &&
        run_until([&] { return context_settled(pa_context_get_state(ctx)); }) &&
        pa_context_get_state(ctx) == PA_CONTEXT_READY) {
        l.pending = 3;
        pa_operation* ops[3] = {pa_context_get_server_info(ctx, on_server_info, &l),
                                pa_context_get_source_info_list(ctx, on_device<pa_source_info, true>, &l),
                                pa_context_get_sink_info_list(ctx, on_device<pa_sink_info, false>, &l)};
        l.ready = run_until([&] { return l.pending <= 0; });
        for (pa_operation* op : ops)
            if (op) pa_operation_unref(op);
    }
    if (ctx) {
        pa_context_disconnect(ctx);
        pa_context_unref(ctx);
    }
    pa_mainloop_free(ml);
    if (!l.ready) return {};
    auto by_name = [](const DeviceInfo& a, const DeviceInfo& b) { return a.name < b.name; };
    std::sort(l.sources.begin(), l.sources.end(), by_name);
    std::sort(l.sinks.begin(), l.sinks.end(), by_name);
    std::vector<DeviceInfo> out;
    for (auto& d : l.sources) {
        d.default_input = d.name == l.default_source;
        out.push_back(std::move(d));
    }
    for (auto& d : l.sinks) {
        d.default_output = d.name == l.default_sink;
        out.push_back(std::move(d));
    }
    for (std::size_t i = 0; i < out.size(); ++i) {
        out[i].index = static_cast<int>(i);
        out[i].host_api = l.host;
        out[i].server = true;
    }
    return out;
}

// [SECTION] Stream

class PulseStream : public Stream {
public:
    PulseStream(StreamCallbacks& cb) : cb_(cb) {}
    ~PulseStream() override {
        if (!ml_) return;
        pa_threaded_mainloop_stop(ml_);  // joins the mainloop thread: no callback runs after this
        if (st_) {
            pa_stream_disconnect(st_);
            pa_stream_unref(st_);
        }
        if (ctx_) {
            pa_context_disconnect(ctx_);
            pa_context_unref(ctx_);
        }
        pa_threaded_mainloop_free(ml_);
    }
    const StreamInfo& info() const override { return info_; }
    bool alive() const override { return !dead_.load(std::memory_order_acquire); }

    void open(const DeviceInfo& dev, bool capture, const StreamRequest& rq) {
        capture_ = capture;
        const std::string what = std::string(capture ? "source" : "sink") + " '" + dev.name + "'";
        ml_ = pa_threaded_mainloop_new();
        if (!ml_) throw Error("pulse " + what + ": could not start a mainloop");
        ctx_ = pa_context_new(pa_threaded_mainloop_get_api(ml_), "Beatless");
        if (!ctx_) throw Error("pulse " + what + ": could not make a context");
        pa_context_set_state_callback(ctx_, &PulseStream::on_context_state, this);
        if (pa_context_connect(ctx_, nullptr, PA_CONTEXT_NOAUTOSPAWN, nullptr) < 0)
            throw Error("pulse " + what + ": no server (" + pa_strerror(pa_context_errno(ctx_)) + ")");
        if (pa_threaded_mainloop_start(ml_) < 0) throw Error("pulse " + what + ": could not start a mainloop");
        if (!wait([&] { return context_settled(pa_context_get_state(ctx_)); }, kConnectTimeout_s) ||
            pa_context_get_state(ctx_) != PA_CONTEXT_READY)
            throw Error("pulse " + what + ": the server did not answer");

        const int max_ch = capture ? dev.max_input_channels : dev.max_output_channels;
        channels_ = detail::stream_channels(capture ? rq.input_channels : rq.output_channels, max_ch);
        const double rate = rq.sample_rate_hz > 0.0 ? rq.sample_rate_hz : 48000.0;
        pa_sample_spec ss{};
        ss.format = PA_SAMPLE_FLOAT32NE;
        ss.rate = static_cast<std::uint32_t>(rate);
        ss.channels = static_cast<std::uint8_t>(channels_);
        if (!pa_sample_spec_valid(&ss))
            throw Error("pulse " + what + " refuses " + pitch::format_trimmed(rate, 1) + " Hz with " +
                        std::to_string(channels_) + " channels");
        frame_bytes_ = pa_frame_size(&ss);
        const auto block_bytes =
            static_cast<std::uint32_t>(std::max<std::size_t>(16, rq.block_len_frames) * frame_bytes_);
        pa_buffer_attr attr;
        attr.maxlength = static_cast<std::uint32_t>(-1);
        attr.fragsize = capture ? block_bytes : static_cast<std::uint32_t>(-1);
        attr.tlength = capture ? static_cast<std::uint32_t>(-1) : 4 * block_bytes;
        attr.prebuf = static_cast<std::uint32_t>(-1);
        attr.minreq = capture ? static_cast<std::uint32_t>(-1) : block_bytes;
        const auto flags = static_cast<pa_stream_flags_t>(PA_STREAM_ADJUST_LATENCY | PA_STREAM_DONT_MOVE);

        pa_threaded_mainloop_lock(ml_);
        st_ = pa_stream_new(ctx_, capture ? "Beatless input" : "Beatless drone", &ss, nullptr);
        int rc = -1;
        if (st_) {
            pa_stream_set_state_callback(st_, &PulseStream::on_stream_state, this);
            if (capture) {
                pa_stream_set_read_callback(st_, &PulseStream::on_read, this);
                pa_stream_set_overflow_callback(st_, &PulseStream::on_overflow, this);
                rc = pa_stream_connect_record(st_, dev.name.c_str(), &attr, flags);
            } else {
                pa_stream_set_write_callback(st_, &PulseStream::on_write, this);
                pa_stream_set_underflow_callback(st_, &PulseStream::on_underflow, this);
                rc = pa_stream_connect_playback(st_, dev.name.c_str(), &attr, flags, nullptr, nullptr);
            }
        }
        const std::string err = rc < 0 ? pa_strerror(pa_context_errno(ctx_)) : "";
        pa_threaded_mainloop_unlock(ml_);
        if (rc < 0) throw Error("pulse " + what + " could not be opened: " + err);
        auto stream_settled = [&] {
            const pa_stream_state_t s = pa_stream_get_state(st_);
            return s == PA_STREAM_READY || s == PA_STREAM_FAILED || s == PA_STREAM_TERMINATED;
        };
        if (!wait(stream_settled, kStreamTimeout_s))
            throw Error("pulse " + what + " could not be opened: the server did not answer");
        pa_threaded_mainloop_lock(ml_);
        const bool ready = pa_stream_get_state(st_) == PA_STREAM_READY;
        const std::string why = ready ? "" : pa_strerror(pa_context_errno(ctx_));
        const pa_buffer_attr* got = ready ? pa_stream_get_buffer_attr(st_) : nullptr;
        const pa_sample_spec* spec = ready ? pa_stream_get_sample_spec(st_) : nullptr;
        const double got_rate = spec ? spec->rate : rate;
        const double frames =
            got ? static_cast<double>(capture ? got->fragsize : got->tlength) / static_cast<double>(frame_bytes_) : 0.0;
        pa_threaded_mainloop_unlock(ml_);
        if (!ready) throw Error("pulse " + what + " could not be opened: " + why);

        info_.sample_rate_hz = got_rate;
        info_.block_len_frames = rq.block_len_frames;
        info_.host_api = dev.host_api;
        if (capture) {
            info_.input_channels = channels_;
            info_.input_name = dev.name;
            info_.input_latency_s = frames / got_rate;
        } else {
            info_.output_channels = channels_;
            info_.output_name = dev.name;
            info_.output_latency_s = frames / got_rate;
        }
    }

private:
    // Waits (polling, unlocked) until done() or the timeout. Thread: caller.
    template <class Done>
    bool wait(Done done, double timeout_s) {
        const auto deadline =
            Clock::now() + std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(timeout_s));
        while (true) {
            pa_threaded_mainloop_lock(ml_);
            const bool ok = done();
            pa_threaded_mainloop_unlock(ml_);
            if (ok) return true;
            if (Clock::now() >= deadline) return false;
            std::this_thread::sleep_for(std::chrono::milliseconds(2));
        }
    }

    // Thread: the mainloop's. Allocates: no (ours). Locks: no (ours).
    static void on_context_state(pa_context* c, void* u) {
        const pa_context_state_t s = pa_context_get_state(c);
        if (s == PA_CONTEXT_FAILED || s == PA_CONTEXT_TERMINATED)
            static_cast<PulseStream*>(u)->dead_.store(true, std::memory_order_release);
    }
    static void on_stream_state(pa_stream* st, void* u) {
        const pa_stream_state_t s = pa_stream_get_state(st);
        if (s == PA_STREAM_FAILED || s == PA_STREAM_TERMINATED)
            static_cast<PulseStream*>(u)->dead_.store(true, std::memory_order_release);
    }
    // Captured audio straight from the server's buffer into the callbacks (which copy it into the ring).
    static void on_read(pa_stream* st, std::size_t, void* u) {
        auto* self = static_cast<PulseStream*>(u);
        while (pa_stream_readable_size(st) > 0) {
            const void* data = nullptr;
            std::size_t bytes = 0;
            if (pa_stream_peek(st, &data, &bytes) < 0 || bytes == 0) return;
            if (data)
                self->cb_.capture(static_cast<const float*>(data), bytes / self->frame_bytes_, self->channels_);
            else
                self->cb_.xrun(true, false);  // a hole: audio the server dropped
            pa_stream_drop(st);
        }
    }
    // The drone rendered straight into the server's buffer.
    static void on_write(pa_stream* st, std::size_t bytes, void* u) {
        auto* self = static_cast<PulseStream*>(u);
        while (bytes >= self->frame_bytes_) {
            void* data = nullptr;
            std::size_t n = bytes;
            if (pa_stream_begin_write(st, &data, &n) < 0 || !data) return;
            n -= n % self->frame_bytes_;
            if (n == 0) {
                pa_stream_cancel_write(st);
                return;
            }
            self->cb_.playback(static_cast<float*>(data), n / self->frame_bytes_, self->channels_);
            if (pa_stream_write(st, data, n, nullptr, 0, PA_SEEK_RELATIVE) < 0) return;
            bytes -= std::min(bytes, n);
        }
    }
    static void on_overflow(pa_stream*, void* u) { static_cast<PulseStream*>(u)->cb_.xrun(true, false); }
    static void on_underflow(pa_stream*, void* u) { static_cast<PulseStream*>(u)->cb_.xrun(false, true); }

    StreamCallbacks& cb_;
    pa_threaded_mainloop* ml_ = nullptr;
    pa_context* ctx_ = nullptr;
    pa_stream* st_ = nullptr;
    StreamInfo info_;
    bool capture_ = true;
    int channels_ = 1;
    std::size_t frame_bytes_ = 4;
    std::atomic<bool> dead_{false};
};

// [SECTION] System

class PulseSystem : public AudioSystem {
public:
    std::vector<DeviceInfo> devices() override {
        listed_ = list_server();
        return listed_;
    }

    std::unique_ptr<Stream> open(const StreamRequest& rq, StreamCallbacks& cb) override {
        if (rq.input_device >= 0 && rq.output_device >= 0)
            throw Error("pulse: a source and a sink are two streams; open them one at a time");
        detail::require_a_direction(rq);
        if (listed_.empty()) listed_ = list_server();
        const bool capture = rq.input_device >= 0;
        const DeviceInfo* d = capture ? detail::requested_device(listed_, rq.input_device, Direction::input, "pulse")
                                      : detail::requested_device(listed_, rq.output_device, Direction::output, "pulse");
        if ((capture ? d->max_input_channels : d->max_output_channels) == 0)
            throw Error("pulse device '" + d->name + "' is not a " + (capture ? "source" : "sink"));
        auto s = std::make_unique<PulseStream>(cb);
        s->open(*d, capture, rq);
        return s;
    }

    void rescan() override { listed_.clear(); }

private:
    std::vector<DeviceInfo> listed_;
};

}  // namespace

std::unique_ptr<AudioSystem> make_pulse_system() { return std::make_unique<PulseSystem>(); }

}  // namespace beatless::audio
