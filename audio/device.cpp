#include "audio/device.h"

#include "audio/jack_device.h"
#include "audio/quiet_stderr.h"
#include "audio/stream_request.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <portaudio.h>

#include <algorithm>
#include <atomic>
#include <cctype>
#include <memory>
#include <thread>

namespace beatless::audio {

// ---------------------------------------------------------------------------
// [SECTION] Choosing a device
// ---------------------------------------------------------------------------

namespace {

std::string lower(std::string_view s) {
    std::string out(s);
    for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return out;
}

int channels(const DeviceInfo& d, Direction dir) {
    return dir == Direction::input ? d.max_input_channels : d.max_output_channels;
}
const char* dir_name(Direction dir) { return dir == Direction::input ? "input" : "output"; }

}  // namespace

DeviceChoice choose_device_why(const std::vector<DeviceInfo>& devices, std::string_view spec, Direction dir) {
    const bool any =
        std::any_of(devices.begin(), devices.end(), [&](const DeviceInfo& d) { return channels(d, dir) > 0; });
    if (!any)
        throw Error(std::string("no audio ") + dir_name(dir) + " device found" +
                    (dir == Direction::input ? std::string(" (") + kDemoHint + ")" : std::string()));
    const std::string_view s = pitch::trim(spec);
    if (s.empty()) {
        auto is_default = [dir](const DeviceInfo& d) {
            return (dir == Direction::input ? d.default_input : d.default_output) && channels(d, dir) > 0;
        };
        for (const DeviceInfo& d : devices)
            if (d.server && is_default(d)) return {d.index, ChoiceWhy::server_default};
        for (const DeviceInfo& d : devices)
            if (d.server && channels(d, dir) > 0) return {d.index, ChoiceWhy::server_first};
        for (const DeviceInfo& d : devices)
            if (is_default(d)) return {d.index, ChoiceWhy::host_default};
        for (const DeviceInfo& d : devices)
            if (channels(d, dir) > 0) return {d.index, ChoiceWhy::first_listed};
    }
    const bool numeric = !s.empty() && std::all_of(s.begin(), s.end(),
                                                   [](char c) { return std::isdigit(static_cast<unsigned char>(c)); });
    if (numeric) {
        const int index = std::stoi(std::string(s.substr(0, 9)));
        for (const DeviceInfo& d : devices) {
            if (d.index != index) continue;
            if (channels(d, dir) == 0)
                throw Error("device " + std::to_string(index) + " '" + d.name + "' has no " + dir_name(dir) +
                            " channels");
            return {index, ChoiceWhy::index};
        }
        throw Error(std::string(dir_name(dir)) + " device " + std::string(s) +
                    ": no such device (see beatless devices)");
    }
    const std::string want = lower(s);
    for (const DeviceInfo& d : devices)  // a whole name wins over names that contain it ('room' beside 'room.monitor')
        if (channels(d, dir) > 0 && lower(d.name) == want) return {d.index, ChoiceWhy::named};
    std::vector<const DeviceInfo*> hits;
    for (const DeviceInfo& d : devices)
        if (channels(d, dir) > 0 && lower(d.name).find(want) != std::string::npos) hits.push_back(&d);
    if (hits.empty())
        throw Error(std::string(dir_name(dir)) + " device " + pitch::quote(s) + ": no " + dir_name(dir) +
                    " device has that in its name (see beatless devices)");
    if (hits.size() > 1) {
        std::string list;
        for (const DeviceInfo* d : hits)
            list += (list.empty() ? "" : ", ") + std::to_string(d->index) + " '" + d->name + "'";
        throw Error(std::string(dir_name(dir)) + " device " + pitch::quote(s) + ": matches " +
                    std::to_string(hits.size()) + " devices (" + list + "); give more of the name or the index");
    }
    return {hits.front()->index, ChoiceWhy::named};
}

const DeviceInfo* find_device(const std::vector<DeviceInfo>& devices, int index) {
    for (const DeviceInfo& d : devices)
        if (d.index == index) return &d;
    return nullptr;
}

DeviceChoice choose_output_device(const std::vector<DeviceInfo>& devices, std::string_view spec, int input_index) {
    if (pitch::trim(spec).empty())
        for (const DeviceInfo& d : devices)
            if (d.index == input_index && d.max_output_channels > 0) return {d.index, ChoiceWhy::input_device};
    return choose_device_why(devices, spec, Direction::output);
}

namespace detail {

const DeviceInfo* requested_device(const std::vector<DeviceInfo>& devices, int index, Direction dir,
                                   std::string_view backend) {
    if (index < 0) return nullptr;
    if (const DeviceInfo* d = find_device(devices, index)) return d;
    throw Error(std::string(dir_name(dir)) + " device " + std::to_string(index) + ": no such " +
                (backend.empty() ? std::string() : std::string(backend) + " ") + "device");
}

void require_a_direction(const StreamRequest& request) {
    if (request.input_device < 0 && request.output_device < 0)
        throw Error("audio stream: neither an input nor an output was asked for");
}

int stream_channels(int wanted, int device_max) { return std::max(1, std::min(wanted, device_max)); }

}  // namespace detail

// ---------------------------------------------------------------------------
// [SECTION] PortAudio
// ---------------------------------------------------------------------------

namespace {

using detail::QuietStderr;  // PortAudio's ALSA and JACK probing noise kept off our stderr
using detail::require_a_direction;
using detail::stream_channels;

std::string pa_text(PaError e) {
    if (e == paUnanticipatedHostError) {
        const PaHostErrorInfo* h = Pa_GetLastHostErrorInfo();
        if (h && h->errorText && *h->errorText) return h->errorText;
    }
    return Pa_GetErrorText(e);
}

class PaStreamImpl : public Stream {
public:
    PaStreamImpl(StreamCallbacks& cb) : cb_(cb) {}
    ~PaStreamImpl() override {
        if (stream_) {
            // No QuietStderr here: a retired stream may block in these calls
            // for good, and stderr must not stay redirected meanwhile.
            Pa_AbortStream(stream_);
            Pa_CloseStream(stream_);
        }
    }
    const StreamInfo& info() const override { return info_; }
    bool alive() const override {
        return stream_ && !finished_.load(std::memory_order_acquire) && Pa_IsStreamActive(stream_) == 1;
    }

    static int callback(const void* in, void* out, unsigned long frames, const PaStreamCallbackTimeInfo*,
                        PaStreamCallbackFlags flags, void* user) {
        auto* self = static_cast<PaStreamImpl*>(user);
        if (flags & (paInputOverflow | paOutputUnderflow))
            self->cb_.xrun((flags & paInputOverflow) != 0, (flags & paOutputUnderflow) != 0);
        if (in) self->cb_.capture(static_cast<const float*>(in), frames, self->info_.input_channels);
        if (out) self->cb_.playback(static_cast<float*>(out), frames, self->info_.output_channels);
        return paContinue;
    }
    static void finished(void* user) {
        static_cast<PaStreamImpl*>(user)->finished_.store(true, std::memory_order_release);
    }

    StreamCallbacks& cb_;
    PaStream* stream_ = nullptr;
    StreamInfo info_;
    std::atomic<bool> finished_{false};
};

class PortAudioSystem : public AudioSystem {
public:
    PortAudioSystem() {
        QuietStderr quiet;
        JackHiddenFromPortAudio no_jack;  // JACK is served by audio/jack_device
        const PaError e = Pa_Initialize();
        if (e != paNoError) throw Error(std::string("audio system (PortAudio) failed to start: ") + pa_text(e));
    }
    ~PortAudioSystem() override {
        // A stream still being closed by its reaper would hang Pa_Terminate:
        // then the process exit cleans up instead.
        if (retiring_->load() > 0) return;
        QuietStderr quiet;
        Pa_Terminate();
    }

    void rescan() override {
        // PortAudio reads the device list at initialisation only, and
        // re-initialising is not safe while a dead stream is being closed.
        if (retiring_->load() > 0) return;
        QuietStderr quiet;
        JackHiddenFromPortAudio no_jack;
        Pa_Terminate();
        Pa_Initialize();
    }

    void retire(std::unique_ptr<Stream> s) override {
        // PortAudio's JACK host, for one, waits forever for a process
        // callback that a dead server never sends: close on a thread of its own.
        retiring_->fetch_add(1);
        std::thread([count = retiring_, stream = std::move(s)]() mutable {
            stream.reset();
            count->fetch_sub(1);
        }).detach();
    }

    std::vector<DeviceInfo> devices() override {
        std::vector<DeviceInfo> out;
        const int n = Pa_GetDeviceCount();
        const PaDeviceIndex def_in = Pa_GetDefaultInputDevice(), def_out = Pa_GetDefaultOutputDevice();
        for (int i = 0; i < n; ++i) {
            const PaDeviceInfo* d = Pa_GetDeviceInfo(i);
            if (!d) continue;
            DeviceInfo info;
            info.index = i;
            info.name = d->name ? d->name : "?";
            const PaHostApiInfo* h = Pa_GetHostApiInfo(d->hostApi);
            info.host_api = h && h->name ? h->name : "?";
            info.max_input_channels = d->maxInputChannels;
            info.max_output_channels = d->maxOutputChannels;
            info.default_rate_hz = d->defaultSampleRate;
            info.default_input = i == def_in;
            info.default_output = i == def_out;
            out.push_back(std::move(info));
        }
        return out;
    }

    std::unique_ptr<Stream> open(const StreamRequest& rq, StreamCallbacks& cb) override {
        QuietStderr quiet;
        auto s = std::make_unique<PaStreamImpl>(cb);
        PaStreamParameters in{}, out{};
        const PaDeviceInfo* din = rq.input_device >= 0 ? Pa_GetDeviceInfo(rq.input_device) : nullptr;
        const PaDeviceInfo* dout = rq.output_device >= 0 ? Pa_GetDeviceInfo(rq.output_device) : nullptr;
        require_a_direction(rq);
        if (rq.input_device >= 0 && !din)
            throw Error("input device " + std::to_string(rq.input_device) + ": no such device");
        if (rq.output_device >= 0 && !dout)
            throw Error("output device " + std::to_string(rq.output_device) + ": no such device");
        const std::string name = din ? std::string("'") + din->name + "'" : std::string("'") + dout->name + "'";
        auto fill = [](PaStreamParameters& p, int device, int want, int max, double latency_s) {
            p.device = device;
            p.channelCount = stream_channels(want, max);
            p.sampleFormat = paFloat32;
            p.suggestedLatency = latency_s;
        };
        if (din) {
            fill(in, rq.input_device, rq.input_channels, din->maxInputChannels, din->defaultLowInputLatency);
            s->info_.input_channels = in.channelCount;
            s->info_.input_name = din->name;
        }
        if (dout) {
            fill(out, rq.output_device, rq.output_channels, dout->maxOutputChannels, dout->defaultLowOutputLatency);
            s->info_.output_channels = out.channelCount;
            s->info_.output_name = dout->name;
        }
        PaStreamParameters* pin = din ? &in : nullptr;
        PaStreamParameters* pout = dout ? &out : nullptr;
        // Negotiate the rate.
        std::vector<double> rates;
        if (rq.sample_rate_hz > 0)
            rates.push_back(rq.sample_rate_hz);
        else
            rates = {48000.0, 44100.0, (din ? din : dout)->defaultSampleRate};
        double rate = 0.0;
        for (double r : rates)
            if (Pa_IsFormatSupported(pin, pout, r) == paFormatIsSupported) {
                rate = r;
                break;
            }
        if (rate == 0.0) {
            const double def = (din ? din : dout)->defaultSampleRate;
            if (rq.sample_rate_hz > 0)
                throw Error("device " + name + " refuses " + pitch::format_trimmed(rq.sample_rate_hz, 1) +
                            " Hz (its default is " + pitch::format_trimmed(def, 1) + " Hz)");
            throw Error("device " + name + " accepts none of 48000, 44100 or " + pitch::format_trimmed(def, 1) + " Hz");
        }
        PaError e = Pa_OpenStream(&s->stream_, pin, pout, rate, static_cast<unsigned long>(rq.block_len_frames),
                                  paNoFlag, &PaStreamImpl::callback, s.get());
        if (e != paNoError) {
            s->stream_ = nullptr;
            throw Error("device " + name + " could not be opened: " + pa_text(e));
        }
        Pa_SetStreamFinishedCallback(s->stream_, &PaStreamImpl::finished);
        const PaStreamInfo* si = Pa_GetStreamInfo(s->stream_);
        s->info_.sample_rate_hz = si ? si->sampleRate : rate;
        s->info_.input_latency_s = si ? si->inputLatency : 0.0;
        s->info_.output_latency_s = si ? si->outputLatency : 0.0;
        s->info_.block_len_frames = rq.block_len_frames;
        const PaHostApiInfo* h = Pa_GetHostApiInfo((din ? din : dout)->hostApi);
        s->info_.host_api = h && h->name ? h->name : "?";
        e = Pa_StartStream(s->stream_);
        if (e != paNoError) throw Error("device " + name + " could not be started: " + pa_text(e));
        return s;
    }

private:
    std::shared_ptr<std::atomic<int>> retiring_ = std::make_shared<std::atomic<int>>(0);
};

}  // namespace

std::unique_ptr<AudioSystem> make_portaudio_system() { return std::make_unique<PortAudioSystem>(); }

bool is_portaudio_stream(const Stream* s) { return dynamic_cast<const PaStreamImpl*>(s) != nullptr; }

}  // namespace beatless::audio
