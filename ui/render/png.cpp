// PNG output — see png.h.
#include "ui/render/png.h"

#include "ui/render/render_error.h"

#include <stb_image_write.h>

#include <cerrno>
#include <cstdio>
#include <cstring>

namespace beatless::ui {

namespace {

struct Sink {
    std::FILE* file = nullptr;
    int err = 0;  // first write error (errno)
};

void sink_write(void* context, void* data, int size) {
    auto* s = static_cast<Sink*>(context);
    if (s->err != 0 || size <= 0) return;
    errno = 0;
    if (std::fwrite(data, 1, static_cast<std::size_t>(size), s->file) != static_cast<std::size_t>(size))
        s->err = errno != 0 ? errno : EIO;
}

std::string reason(int err) { return std::string(" (") + std::strerror(err) + ")"; }

void append_bytes(void* context, void* data, int size) {
    if (size > 0)
        static_cast<std::string*>(context)->append(static_cast<const char*>(data), static_cast<std::size_t>(size));
}

void check_image(const std::string& name, const PixelBuffer& image) {
    if (image.width_px <= 0 || image.height_px <= 0 ||
        image.pixels.size() < static_cast<std::size_t>(image.width_px) * static_cast<std::size_t>(image.height_px))
        throw RenderError(name + ": cannot be written (the image is empty)");
}

}  // namespace

std::string encode_png(const PixelBuffer& image, const std::string& name) {
    check_image(name, image);
    std::string bytes;
    if (stbi_write_png_to_func(&append_bytes, &bytes, image.width_px, image.height_px, 4, image.pixels.data(),
                               image.width_px * 4) == 0)
        throw RenderError(name + ": cannot be written (PNG encoding failed)");
    return bytes;
}

void write_png(const std::string& path, const PixelBuffer& image) {
    check_image(path, image);
    errno = 0;
    Sink sink;
    sink.file = std::fopen(path.c_str(), "wb");
    if (sink.file == nullptr) throw RenderError(path + ": cannot be written" + reason(errno != 0 ? errno : EIO));
    const int ok = stbi_write_png_to_func(&sink_write, &sink, image.width_px, image.height_px, 4, image.pixels.data(),
                                          image.width_px * 4);
    errno = 0;
    const bool closed = std::fclose(sink.file) == 0;
    const int close_err = closed ? 0 : (errno != 0 ? errno : EIO);
    if (ok == 0) throw RenderError(path + ": cannot be written (PNG encoding failed)");
    if (sink.err != 0) throw RenderError(path + ": cannot be written" + reason(sink.err));
    if (close_err != 0) throw RenderError(path + ": cannot be written" + reason(close_err));
}

}  // namespace beatless::ui
