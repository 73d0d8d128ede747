// Quiet stderr (internal to audio/) — fd 2 sent to /dev/null for a scope.
// The C libraries under our devices print their probing noise there: ALSA and
// libjack (through PortAudio and RtMidi) on every look for a device or server
// that is not there. Thread: the control thread only (fd 2 is the process's).
#pragma once

namespace beatless::audio::detail {

// Flushes stderr, then points fd 2 at /dev/null until destroyed, which
// flushes and gives fd 2 back. Never hold one across a call that may block
// for good (a retired stream's close): stderr would stay silent meanwhile.
class QuietStderr {
public:
    QuietStderr();
    ~QuietStderr();
    QuietStderr(const QuietStderr&) = delete;
    QuietStderr& operator=(const QuietStderr&) = delete;

private:
    int saved_ = -1;  // the real fd 2, duplicated (close-on-exec)
};

}  // namespace beatless::audio::detail
