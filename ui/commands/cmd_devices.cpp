// beatless devices [--format text|json]
//
// Lists the audio devices PortAudio finds: index, name, host API, input and
// output channel counts, default sample rate, and which are the defaults;
// then the MIDI ports (ALSA sequencer, JACK), numbered as --midi-out and
// --midi-in take them. With no audio device at all it says so on stderr and suggests --demo.
#include "audio/device.h"
#include "audio/midi_out.h"
#include "audio/sound_system.h"
#include "pitch/base/text.h"
#include "ui/commands/commands.h"
#include "ui/session/json.h"

#include <cstdio>
#include <memory>

namespace beatless::ui {

namespace {

// MIDI ports numbered from 1 within each direction, as --midi-out and --midi-in count them.
struct NumberedPort {
    int number;
    const audio::MidiPort* port;
};
std::vector<NumberedPort> numbered(const std::vector<audio::MidiPort>& ports, bool input) {
    std::vector<NumberedPort> out;
    for (const auto& p : ports)
        if (p.input == input) out.push_back({static_cast<int>(out.size()) + 1, &p});
    return out;
}

int run_devices(Format format) {
    auto system = audio::make_sound_system();
    const auto devs = system->devices();
    const auto midi = audio::list_midi_ports();
    if (format == Format::json) {
        JsonWriter j;
        j.begin_object().key("devices").begin_array();
        for (const auto& d : devs) {
            j.begin_object();
            j.key("index").value(d.index).key("name").value(d.name).key("host_api").value(d.host_api);
            j.key("inputs").value(d.max_input_channels).key("outputs").value(d.max_output_channels);
            j.key("default_rate_hz").value(d.default_rate_hz, 1);
            j.key("default_input").value(d.default_input).key("default_output").value(d.default_output);
            j.end_object();
        }
        j.end_array().key("midi").begin_array();
        for (bool input : {false, true})
            for (const auto& n : numbered(midi, input))
                j.begin_object()
                    .key("number")
                    .value(n.number)
                    .key("name")
                    .value(n.port->name)
                    .key("api")
                    .value(n.port->api)
                    .key("direction")
                    .value(input ? "in" : "out")
                    .end_object();
        j.end_array().end_object();
        std::printf("%s\n", j.str().c_str());
    } else if (!devs.empty()) {
        std::printf("%5s  %-32s %-28s %3s %4s %9s\n", "index", "name", "host API", "in", "out", "rate Hz");
        for (const auto& d : devs) {
            std::string mark;
            if (d.default_input) mark += " default input";
            if (d.default_output) mark += mark.empty() ? " default output" : ", output";
            std::printf("%5d  %-32s %-28s %3d %4d %9s%s\n", d.index, d.name.c_str(), d.host_api.c_str(),
                        d.max_input_channels, d.max_output_channels,
                        pitch::format_trimmed(d.default_rate_hz, 1).c_str(), mark.c_str());
        }
    }
    if (format != Format::json) {
        if (midi.empty()) {
            std::printf("\nMIDI: no ports (no ALSA sequencer or JACK server is running)\n");
        } else {
            std::printf("\n%5s  %-44s %-5s %s\n", "MIDI", "port", "API", "use with");
            for (bool input : {false, true})
                for (const auto& n : numbered(midi, input))
                    std::printf("%5d  %-44s %-5s %s\n", n.number, n.port->name.c_str(), n.port->api.c_str(),
                                input ? "--midi-in (a keyboard)" : "--midi-out (a synth)");
        }
    }
    if (devs.empty()) std::fprintf(stderr, "beatless: no audio devices found (%s)\n", audio::kDemoHint);
    return 0;
}

}  // namespace

void register_devices(CLI::App& app, Runner& run) {
    auto format = std::make_shared<Format>(Format::text);
    CLI::App* sub = app.add_subcommand(
        "devices", "List audio devices (index, name, host API, channels, default rate) and MIDI ports");
    add_format_option(*sub, *format, false);
    sub->callback([format, &run] { run = [format] { return run_devices(*format); }; });
}

}  // namespace beatless::ui
