// Test helper: a MIDI keyboard on JACK. Registers the output port
// CLIENT:keys, waits DELAY seconds, presses KEY (note on, velocity 64),
// releases it 0.3 s later and exits. Usage: midi_keys CLIENT KEY DELAY_S
#include <rtmidi/RtMidi.h>

#include <chrono>
#include <cstdio>
#include <string>
#include <thread>
#include <vector>

int main(int argc, char** argv) {
    if (argc != 4) {
        std::fprintf(stderr, "usage: midi_keys CLIENT KEY DELAY_S\n");
        return 2;
    }
    try {
        RtMidiOut out(RtMidi::UNIX_JACK, argv[1]);
        out.openVirtualPort("keys");
        const auto key = static_cast<unsigned char>(std::stoi(argv[2]) & 0x7F);
        std::this_thread::sleep_for(std::chrono::duration<double>(std::stod(argv[3])));
        std::vector<unsigned char> on = {0x90, key, 64}, off = {0x80, key, 0};
        out.sendMessage(&on);
        std::this_thread::sleep_for(std::chrono::milliseconds(300));
        out.sendMessage(&off);
        std::this_thread::sleep_for(std::chrono::milliseconds(500));
    } catch (const RtMidiError& e) {
        std::fprintf(stderr, "midi_keys: %s\n", e.getMessage().c_str());
        return 1;
    }
    return 0;
}
