// libFuzzer target: any bytes as a sound file (audio/soundfile, libsndfile's
// header parsing behind it) must open and read to the end, or throw
// beatless::Error naming the file; never crash, hang or hit UB.
#include "audio/soundfile.h"
#include "pitch/base/error.h"

#include <unistd.h>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    static const std::string path = "/tmp/beatless-fuzz-sound-" + std::to_string(::getpid()) + ".wav";
    std::FILE* f = std::fopen(path.c_str(), "wb");
    if (!f) std::abort();
    if (size > 0 && std::fwrite(data, 1, size, f) != size) std::abort();
    std::fclose(f);
    try {
        beatless::audio::SoundReader r(path);
        if (!(r.info().sample_rate_hz > 0.0) || r.info().channels < 1) std::abort();
        std::size_t blocks = 0;
        for (auto b = r.read(); !b.empty(); b = r.read())
            if (++blocks > 4096) break;  // a header may claim more than the bytes hold
    } catch (const beatless::Error& e) {
        if (std::string(e.what()).rfind(path, 0) != 0) std::abort();
    }
    std::remove(path.c_str());
    return 0;
}
