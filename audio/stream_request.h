// Stream requests (internal to audio/) — what every backend's AudioSystem::open
// does first with a StreamRequest: the devices its indices name, the direction
// asked for, the channels to open. Throws beatless::Error naming the index.
// Thread: the control thread (as AudioSystem).
#pragma once

#include "audio/device.h"

#include <string_view>
#include <vector>

namespace beatless::audio::detail {

// The device a request's index names (null for -1), or Error
// "input device 3: no such <backend> device" when `devices` has none.
const DeviceInfo* requested_device(const std::vector<DeviceInfo>& devices, int index, Direction dir,
                                   std::string_view backend);
// Error "audio stream: neither an input nor an output was asked for" unless the request names one.
void require_a_direction(const StreamRequest& request);
// The channels a stream opens: as many as wanted, at least 1, at most the device has.
int stream_channels(int wanted, int device_max);

}  // namespace beatless::audio::detail
