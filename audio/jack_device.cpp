// JACK devices: physical ports grouped by client prefix, one libjack client per stream.
//
// Index: [SECTION] Listing, [SECTION] Stream, [SECTION] System.
#include "audio/jack_device.h"
#include "audio/stream_request.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <jack/jack.h>

#include <algorithm>
#include <atomic>
#include <cstdlib>
#include <map>
#include <string>
#include <vector>

namespace beatless::audio {

namespace {

constexpr std::size_t kMaxPeriodFrames = 8192;  // the scratch is sized for this; longer periods go in chunks

void quiet(const char*) {}

// libjack prints to stderr by default, also from its own threads when a server dies.
void silence_jack() {
    jack_set_error_function(quiet);
    jack_set_info_function(quiet);
}

jack_client_t* connect_client(const char* name) {
    silence_jack();
    jack_status_t status{};
    return jack_client_open(name, JackNoStartServer, &status);  // the server JACK_DEFAULT_SERVER names, else "default"
}

// [SECTION] Listing

struct PortGroup {
    std::vector<std::string> capture;   // physical outputs: the device's inputs
    std::vector<std::string> playback;  // physical inputs: the device's outputs
};

std::vector<std::string> port_names(jack_client_t* c, unsigned long flags) {
    std::vector<std::string> out;
    if (const char** p = jack_get_ports(c, nullptr, JACK_DEFAULT_AUDIO_TYPE, flags)) {
        for (const char** q = p; *q; ++q) out.emplace_back(*q);
        jack_free(p);
    }
    return out;
}

// Physical ports by client prefix ("system:capture_1" -> "system"), in the server's order.
std::map<std::string, PortGroup> physical_ports(jack_client_t* c) {
    std::map<std::string, PortGroup> groups;
    auto prefix = [](const std::string& p) { return p.substr(0, p.find(':')); };
    for (const std::string& p : port_names(c, JackPortIsPhysical | JackPortIsOutput))
        groups[prefix(p)].capture.push_back(p);
    for (const std::string& p : port_names(c, JackPortIsPhysical | JackPortIsInput))
        groups[prefix(p)].playback.push_back(p);
    return groups;
}

// [SECTION] Stream

class JackStream : public Stream {
public:
    JackStream(StreamCallbacks& cb) : cb_(cb) {}
    ~JackStream() override {
        if (!client_) return;
        jack_deactivate(client_);  // returns at once when the server has gone
        jack_client_close(client_);
    }
    const StreamInfo& info() const override { return info_; }
    bool alive() const override { return !dead_.load(std::memory_order_acquire); }

    void open(const DeviceInfo& dev, int in_channels, int out_channels, double rate_hz) {
        const std::string what = "JACK device '" + dev.name + "'";
        client_ = connect_client("beatless");
        if (!client_) throw Error(what + ": no JACK server is running");
        const double server_rate = jack_get_sample_rate(client_);
        if (rate_hz > 0.0 && rate_hz != server_rate)
            throw Error("device '" + dev.name + "' refuses " + pitch::format_trimmed(rate_hz, 1) +
                        " Hz (the JACK server runs at " + pitch::format_trimmed(server_rate, 1) + " Hz)");
        const std::map<std::string, PortGroup> groups = physical_ports(client_);
        const auto g = groups.find(dev.name);
        if (g == groups.end()) throw Error(what + ": the server has no such ports now");
        auto add_ports = [&](int n, const char* stem, unsigned long flags, std::vector<jack_port_t*>& into) {
            for (int k = 0; k < n; ++k) {
                const std::string port = std::string(stem) + std::to_string(k + 1);
                jack_port_t* p = jack_port_register(client_, port.c_str(), JACK_DEFAULT_AUDIO_TYPE, flags, 0);
                if (!p) throw Error(what + ": could not register port " + port);
                into.push_back(p);
            }
        };
        add_ports(in_channels, "in_", JackPortIsInput, in_ports_);
        add_ports(out_channels, "out_", JackPortIsOutput, out_ports_);
        in_buf_.assign(kMaxPeriodFrames * static_cast<std::size_t>(std::max(1, in_channels)), 0.0f);
        out_buf_.assign(kMaxPeriodFrames * static_cast<std::size_t>(std::max(1, out_channels)), 0.0f);
        jack_set_process_callback(client_, &JackStream::process, this);
        jack_set_xrun_callback(client_, &JackStream::on_xrun, this);
        jack_on_info_shutdown(client_, &JackStream::on_shutdown, this);
        if (jack_activate(client_) != 0) throw Error(what + " could not be started");
        // Wire our ports to the device's, as a sound card's channels.
        for (std::size_t k = 0; k < in_ports_.size() && k < g->second.capture.size(); ++k)
            jack_connect(client_, g->second.capture[k].c_str(), jack_port_name(in_ports_[k]));
        for (std::size_t k = 0; k < out_ports_.size() && k < g->second.playback.size(); ++k)
            jack_connect(client_, jack_port_name(out_ports_[k]), g->second.playback[k].c_str());

        const jack_nframes_t period = jack_get_buffer_size(client_);
        jack_latency_range_t in_lat{}, out_lat{};
        if (!in_ports_.empty()) jack_port_get_latency_range(in_ports_.front(), JackCaptureLatency, &in_lat);
        if (!out_ports_.empty()) jack_port_get_latency_range(out_ports_.front(), JackPlaybackLatency, &out_lat);
        info_.sample_rate_hz = server_rate;
        info_.block_len_frames = period;
        info_.input_channels = in_channels;
        info_.output_channels = out_channels;
        info_.input_name = in_channels > 0 ? dev.name : "";
        info_.output_name = out_channels > 0 ? dev.name : "";
        info_.input_latency_s = in_lat.max / server_rate;
        info_.output_latency_s = out_lat.max / server_rate;
        info_.host_api = kJackHostApi;
    }

private:
    // Thread: JACK's process thread. Allocates: no. Locks: no.
    static int process(jack_nframes_t frames, void* u) {
        auto* self = static_cast<JackStream*>(u);
        for (jack_nframes_t done = 0; done < frames;) {
            const std::size_t n = std::min<std::size_t>(frames - done, kMaxPeriodFrames);
            if (!self->in_ports_.empty()) {
                const std::size_t ch = self->in_ports_.size();
                for (std::size_t c = 0; c < ch; ++c) {
                    const auto* src =
                        static_cast<const float*>(jack_port_get_buffer(self->in_ports_[c], frames)) + done;
                    for (std::size_t i = 0; i < n; ++i) self->in_buf_[i * ch + c] = src[i];
                }
                self->cb_.capture(self->in_buf_.data(), n, static_cast<int>(ch));
            }
            if (!self->out_ports_.empty()) {
                const std::size_t ch = self->out_ports_.size();
                self->cb_.playback(self->out_buf_.data(), n, static_cast<int>(ch));
                for (std::size_t c = 0; c < ch; ++c) {
                    auto* dst = static_cast<float*>(jack_port_get_buffer(self->out_ports_[c], frames)) + done;
                    for (std::size_t i = 0; i < n; ++i) dst[i] = self->out_buf_[i * ch + c];
                }
            }
            done += static_cast<jack_nframes_t>(n);
        }
        return 0;
    }
    static int on_xrun(void* u) {
        auto* self = static_cast<JackStream*>(u);
        self->cb_.xrun(!self->in_ports_.empty(), !self->out_ports_.empty());
        return 0;
    }
    static void on_shutdown(jack_status_t, const char*, void* u) {
        static_cast<JackStream*>(u)->dead_.store(true, std::memory_order_release);
    }

    StreamCallbacks& cb_;
    jack_client_t* client_ = nullptr;
    std::vector<jack_port_t*> in_ports_, out_ports_;
    std::vector<float> in_buf_, out_buf_;  // interleaved, kMaxPeriodFrames long
    StreamInfo info_;
    std::atomic<bool> dead_{false};
};

// [SECTION] System

class JackSystem : public AudioSystem {
public:
    JackSystem() { silence_jack(); }

    std::vector<DeviceInfo> devices() override {
        listed_.clear();
        jack_client_t* c = connect_client("beatless-list");
        if (!c) return listed_;
        const double rate = jack_get_sample_rate(c);
        for (const auto& [name, g] : physical_ports(c)) {
            DeviceInfo d;
            d.index = static_cast<int>(listed_.size());
            d.name = name;
            d.host_api = kJackHostApi;
            d.max_input_channels = static_cast<int>(g.capture.size());
            d.max_output_channels = static_cast<int>(g.playback.size());
            d.default_rate_hz = rate;
            listed_.push_back(std::move(d));
        }
        jack_client_close(c);
        return listed_;
    }

    std::unique_ptr<Stream> open(const StreamRequest& rq, StreamCallbacks& cb) override {
        if (listed_.empty()) devices();
        detail::require_a_direction(rq);
        const DeviceInfo* in = detail::requested_device(listed_, rq.input_device, Direction::input, "JACK");
        const DeviceInfo* out = detail::requested_device(listed_, rq.output_device, Direction::output, "JACK");
        if (in && out && in != out)
            throw Error("JACK devices '" + in->name + "' and '" + out->name + "' need a stream each");
        const DeviceInfo& dev = in ? *in : *out;
        const int in_ch = in ? detail::stream_channels(rq.input_channels, in->max_input_channels) : 0;
        const int out_ch = out ? detail::stream_channels(rq.output_channels, out->max_output_channels) : 0;
        auto s = std::make_unique<JackStream>(cb);
        s->open(dev, in_ch, out_ch, rq.sample_rate_hz);
        return s;
    }

    void rescan() override { listed_.clear(); }

private:
    std::vector<DeviceInfo> listed_;
};

}  // namespace

std::unique_ptr<AudioSystem> make_jack_system() { return std::make_unique<JackSystem>(); }

JackHiddenFromPortAudio::JackHiddenFromPortAudio() {
    if (const char* env = std::getenv("JACK_DEFAULT_SERVER")) {
        had_ = true;
        saved_ = env;
    }
    setenv("JACK_DEFAULT_SERVER", "beatless-no-server-for-portaudio", 1);
}

JackHiddenFromPortAudio::~JackHiddenFromPortAudio() {
    if (had_)
        setenv("JACK_DEFAULT_SERVER", saved_.c_str(), 1);
    else
        unsetenv("JACK_DEFAULT_SERVER");
}

}  // namespace beatless::audio
