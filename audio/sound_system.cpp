// The sound system: PortAudio's devices and a pulse server's under one index.
#include "audio/sound_system.h"

#include "audio/jack_device.h"
#include "audio/pulse_device.h"
#include "audio/stream_request.h"
#include "pitch/base/error.h"

#include <string>
#include <vector>

namespace beatless::audio {

namespace {

// PortAudio's JACK host: its streams cannot be closed after the server died
// (audio/jack_device.h), so JACK's devices come from jack_ instead.
constexpr const char* kPortAudioJackHost = "JACK Audio Connection Kit";
constexpr const char* kAlsaPulseDevice = "pulse";

class CombinedSystem : public AudioSystem {
public:
    CombinedSystem() {
        try {
            portaudio_ = make_portaudio_system();
        } catch (const Error&) {
            portaudio_.reset();  // the pulse server may still serve
        }
        jack_ = make_jack_system();  // after PortAudio, whose start sets libjack's message handler
        pulse_ = make_pulse_system();
    }

    std::vector<DeviceInfo> devices() override {
        std::vector<DeviceInfo> out;
        routes_.clear();
        // ALSA's "pulse" device reaches the same server through a plugin that can hang
        // PortAudio for good: while the server answers, pulse_ serves it instead.
        const std::vector<DeviceInfo> served = pulse_->devices();
        for (AudioSystem* sys : {portaudio_.get(), jack_.get(), pulse_.get()}) {
            if (!sys) continue;
            for (DeviceInfo d : sys == pulse_.get() ? served : sys->devices()) {
                if (sys == portaudio_.get() && d.host_api == kPortAudioJackHost) continue;  // served by jack_ instead
                if (sys == portaudio_.get() && !served.empty() && d.name == kAlsaPulseDevice) continue;
                routes_.push_back({sys, d.index});
                d.index = static_cast<int>(out.size());
                out.push_back(std::move(d));
            }
        }
        return out;
    }

    std::unique_ptr<Stream> open(const StreamRequest& rq, StreamCallbacks& cb) override {
        detail::require_a_direction(rq);
        if (routes_.empty()) devices();
        auto route = [&](int index, const char* dir) -> const Route* {
            if (index < 0) return nullptr;
            if (index >= static_cast<int>(routes_.size()))
                throw Error(std::string(dir) + " device " + std::to_string(index) + ": no such device");
            return &routes_[static_cast<std::size_t>(index)];
        };
        const Route* in = route(rq.input_device, "input");
        const Route* out = route(rq.output_device, "output");
        if (in && out && in->system != out->system)
            throw Error("input and output devices belong to different sound systems; they need a stream each");
        StreamRequest local = rq;
        local.input_device = in ? in->index : -1;
        local.output_device = out ? out->index : -1;
        AudioSystem* sys = in ? in->system : out->system;
        return sys->open(local, cb);
    }

    void rescan() override {
        if (portaudio_) portaudio_->rescan();
        jack_->rescan();
        pulse_->rescan();
        routes_.clear();
    }

    void retire(std::unique_ptr<Stream> s) override {
        if (!s) return;
        if (is_portaudio_stream(s.get()))
            portaudio_->retire(std::move(s));
        else
            s.reset();  // a pulse or JACK stream closes at once, server or not
    }

private:
    struct Route {
        AudioSystem* system = nullptr;
        int index = -1;  // the backend's own index
    };
    std::unique_ptr<AudioSystem> portaudio_, jack_, pulse_;
    std::vector<Route> routes_;  // by combined index, from the last devices()
};

}  // namespace

std::unique_ptr<AudioSystem> make_sound_system() { return std::make_unique<CombinedSystem>(); }

}  // namespace beatless::audio
