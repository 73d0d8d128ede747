#include "audio/fake_device.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>

namespace beatless::audio {

struct FakeAudioSystem::FakeStream : Stream {
    FakeStream(FakeAudioSystem& sys, StreamCallbacks& cb) : sys_(sys), cb_(cb) {}
    ~FakeStream() override {
        if (sys_.current_ == this) sys_.current_ = nullptr;
    }
    const StreamInfo& info() const override { return info_; }
    bool alive() const override { return alive_ && sys_.present_; }

    FakeAudioSystem& sys_;
    StreamCallbacks& cb_;
    StreamInfo info_;
    bool alive_ = true;
    bool has_input = false, has_output = false;
};

DeviceInfo fake_device(int index, std::string name, int inputs, int outputs, double default_rate_hz) {
    DeviceInfo d;
    d.index = index;
    d.name = std::move(name);
    d.host_api = "Fake";
    d.max_input_channels = inputs;
    d.max_output_channels = outputs;
    d.default_rate_hz = default_rate_hz;
    return d;
}

FakeAudioSystem::FakeAudioSystem(std::vector<DeviceInfo> devices, std::vector<double> rates_hz)
    : devices_(std::move(devices)), rates_hz_(std::move(rates_hz)) {
    for (DeviceInfo& d : devices_) {
        if (d.max_input_channels > 0 &&
            std::none_of(devices_.begin(), devices_.end(), [](const DeviceInfo& x) { return x.default_input; }))
            d.default_input = true;
        if (d.max_output_channels > 0 &&
            std::none_of(devices_.begin(), devices_.end(), [](const DeviceInfo& x) { return x.default_output; }))
            d.default_output = true;
    }
}

std::unique_ptr<Stream> FakeAudioSystem::open(const StreamRequest& rq, StreamCallbacks& cb) {
    const DeviceInfo* din = rq.input_device >= 0 ? find_device(devices_, rq.input_device) : nullptr;
    const DeviceInfo* dout = rq.output_device >= 0 ? find_device(devices_, rq.output_device) : nullptr;
    if (!present_ || (rq.input_device >= 0 && !din) || (rq.output_device >= 0 && !dout))
        throw Error("device " + std::to_string(rq.input_device >= 0 ? rq.input_device : rq.output_device) +
                    ": no such device");
    const std::string name = "'" + (din ? din : dout)->name + "'";
    double rate = 0.0;
    if (rq.sample_rate_hz > 0) {
        if (std::find(rates_hz_.begin(), rates_hz_.end(), rq.sample_rate_hz) == rates_hz_.end())
            throw Error("device " + name + " refuses " + pitch::format_trimmed(rq.sample_rate_hz, 1) +
                        " Hz (its default is " + pitch::format_trimmed((din ? din : dout)->default_rate_hz, 1) +
                        " Hz)");
        rate = rq.sample_rate_hz;
    } else {
        rate = rates_hz_.front();
    }
    auto s = std::make_unique<FakeStream>(*this, cb);
    s->info_.sample_rate_hz = rate;
    s->info_.block_len_frames = rq.block_len_frames;
    s->info_.input_channels = din ? std::min(rq.input_channels, din->max_input_channels) : 0;
    s->info_.output_channels = dout ? std::min(rq.output_channels, dout->max_output_channels) : 0;
    s->info_.input_name = din ? din->name : "";
    s->info_.output_name = dout ? dout->name : "";
    s->info_.host_api = "Fake";
    s->has_input = din != nullptr;
    s->has_output = dout != nullptr;
    current_ = s.get();
    ++opens_;
    return s;
}

bool FakeAudioSystem::drive(std::span<const float> in, std::span<float> out, int in_channels,
                            int out_channels) noexcept {
    FakeStream* s = current_;
    if (!s || !s->alive()) return false;
    if (s->has_input && !in.empty())
        s->cb_.capture(in.data(), in.size() / static_cast<std::size_t>(in_channels), in_channels);
    if (s->has_output && !out.empty())
        s->cb_.playback(out.data(), out.size() / static_cast<std::size_t>(out_channels), out_channels);
    return true;
}

void FakeAudioSystem::set_present(bool present) {
    present_ = present;
    if (!present && current_) current_->alive_ = false;
}

bool FakeAudioSystem::stream_alive() const { return current_ && current_->alive(); }

}  // namespace beatless::audio
