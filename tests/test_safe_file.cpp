// Safe files: outputs written beside the target and renamed, refusals of
// devices, folders, FIFOs and sockets, no folders made, nothing left behind
// on a full disk; inputs checked by type and read with a size cap; the
// practice log never made of another file.
//
// Sources: file types and their tests are POSIX <sys/stat.h> (S_ISREG,
// S_ISDIR, S_ISCHR, S_ISFIFO, S_ISSOCK); rename(2) replacing the target
// atomically and write(2) failing with EFBIG past RLIMIT_FSIZE (SIGXFSZ
// ignored) are POSIX.1-2017; /dev/null and /dev/full are character devices
// (Linux devices.txt: 1,3 and 1,7); the 16-byte header "SQLite format 3\0"
// is the SQLite file format (sqlite.org/fileformat.html, section 1.3).
#include "pitch/base/error.h"
#include "tests/cli.h"
#include "ui/session/safe_file.h"

#include <doctest/doctest.h>

#include <sys/resource.h>
#include <sys/socket.h>
#include <sys/stat.h>
#include <sys/un.h>
#include <unistd.h>
#include <csignal>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <thread>

using beatless::Error;
using beatless::test::run_program;
using beatless::test::TempDir;
namespace fs = std::filesystem;
namespace ui = beatless::ui;

namespace {

std::string slurp(const fs::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

void put(const fs::path& p, const std::string& text) { std::ofstream(p, std::ios::binary) << text; }

// Names in a folder, to see that no temporary is left behind.
int entries(const fs::path& dir) {
    int n = 0;
    for ([[maybe_unused]] const auto& e : fs::directory_iterator(dir)) ++n;
    return n;
}

bool is_char_device(const char* path) {
    struct stat st {};
    return ::stat(path, &st) == 0 && S_ISCHR(st.st_mode);
}

std::string message_of(auto&& f) {
    try {
        f();
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}

// A file-size limit for this process and the programs it starts (ulimit -f),
// standing in for a full disk where no tmpfs can be mounted.
struct FileSizeLimit {
    rlimit old{};
    explicit FileSizeLimit(rlim_t bytes) {
        ::getrlimit(RLIMIT_FSIZE, &old);
        std::signal(SIGXFSZ, SIG_IGN);
        rlimit r = old;
        r.rlim_cur = bytes;
        ::setrlimit(RLIMIT_FSIZE, &r);
    }
    ~FileSizeLimit() { ::setrlimit(RLIMIT_FSIZE, &old); }
};

}  // namespace

TEST_CASE("an output is written whole and renamed into place, keeping an existing file's mode") {
    TempDir t;
    const fs::path f = t.file("out.csv");
    ui::write_file_safely(f, "a,b\n1,2\n");
    CHECK(slurp(f) == "a,b\n1,2\n");
    CHECK(entries(t.path()) == 1);  // no temporary left beside it
    ::chmod(f.c_str(), 0640);
    ui::write_file_safely(f, "new");
    CHECK(slurp(f) == "new");
    struct stat st {};
    REQUIRE(::stat(f.c_str(), &st) == 0);
    CHECK((st.st_mode & 0777) == 0640);
    // A symbolic link keeps being a link; the file it points to is replaced.
    const fs::path link = t.file("link.csv");
    fs::create_symlink(f, link);
    ui::write_file_safely(link, "through the link");
    CHECK(fs::is_symlink(link));
    CHECK(slurp(f) == "through the link");
}

TEST_CASE("devices, folders, FIFOs and sockets are refused as outputs, and left as they were") {
    TempDir t;
    CHECK(message_of([] { ui::write_file_safely("/dev/full", "x"); }) ==
          "/dev/full: is a device, not a file; give a file name");
    CHECK(message_of([] { ui::write_file_safely("/dev/null", "x"); }) ==
          "/dev/null: is a device, not a file; give a file name");
    CHECK(is_char_device("/dev/full"));
    CHECK(is_char_device("/dev/null"));
    CHECK(message_of([&] { ui::write_file_safely(t.path(), "x"); }) ==
          t.path() + ": is a folder, not a file; give a file name");
    const std::string fifo = t.file("pipe");
    REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
    CHECK(message_of([&] { ui::write_file_safely(fifo, "x"); }) ==
          fifo + ": is a named pipe (FIFO), not a file; give a file name");
    const std::string sock = t.file("sock");
    const int fd = ::socket(AF_UNIX, SOCK_STREAM, 0);
    sockaddr_un addr{};
    addr.sun_family = AF_UNIX;
    sock.copy(addr.sun_path, sizeof addr.sun_path - 1);
    REQUIRE(::bind(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) == 0);
    CHECK(message_of([&] { ui::write_file_safely(sock, "x"); }) ==
          sock + ": is a socket, not a file; give a file name");
    ::close(fd);
    CHECK(entries(t.path()) == 2);  // the pipe and the socket, nothing else
}

TEST_CASE("a missing folder is named and never created") {
    TempDir t;
    const std::string target = t.file("no/such/out.png");
    CHECK(message_of([&] { ui::write_file_safely(target, "x"); }) ==
          target + ": the folder " + t.file("no/such") + " does not exist (create it first)");
    CHECK(!fs::exists(t.file("no")));
    put(t.file("plain"), "x");
    CHECK(message_of([&] { ui::write_file_safely(t.file("plain/out.png"), "x"); }) ==
          t.file("plain/out.png") + ": " + t.file("plain") + " is not a folder");
}

TEST_CASE("a full disk (file-size limit): the error names the file and the old file stays whole") {
    TempDir t;
    const fs::path f = t.file("take.csv");
    put(f, "old contents\n");
    std::string msg;
    {
        FileSizeLimit limit(64 * 1024);
        msg = message_of([&] { ui::write_file_safely(f, std::string(200 * 1024, 'x')); });
    }
    CHECK(msg == f.string() + ": cannot be written (File too large)");  // strerror(EFBIG), glibc
    CHECK(slurp(f) == "old contents\n");
    CHECK(entries(t.path()) == 1);
}

TEST_CASE("text inputs: type checked first, size capped with a stated limit") {
    TempDir t;
    put(t.file("a.toml"), "kind = \"targets\"\n");
    CHECK(ui::read_text_file(t.file("a.toml"), ui::kTomlLimitBytes, "TOML file") == "kind = \"targets\"\n");
    // 2 MB against the 1 MB cap, as a sparse file: refused before reading.
    fs::resize_file(t.file("a.toml"), 2u << 20);
    CHECK(message_of([&] { ui::read_text_file(t.file("a.toml"), ui::kTomlLimitBytes, "TOML file"); }) ==
          t.file("a.toml") + ": too large (2 MB, limit 1 MB)");
    CHECK(message_of([] { ui::read_text_file("/dev/zero", ui::kCsvLimitBytes, "CSV file"); }) ==
          "/dev/zero: is a device, not a CSV file");
    CHECK(message_of([&] { ui::read_text_file(t.path(), ui::kCsvLimitBytes, "CSV file"); }) ==
          t.path() + ": is a folder, not a CSV file");
    // A named FIFO is refused before it is opened (opening would wait for a writer).
    const std::string fifo = t.file("pipe");
    REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
    CHECK(message_of([&] { ui::read_text_file(fifo, ui::kCsvLimitBytes, "CSV file"); }) ==
          fifo + ": is a named pipe (FIFO), not a CSV file; save it to a file, or pass it as <(command)");
}

TEST_CASE("an anonymous pipe (as bash's <(...) gives) is read, and capped like a file") {
    std::signal(SIGPIPE, SIG_IGN);  // the writer outlives the refused read
    int fds[2];
    REQUIRE(::pipe(fds) == 0);
    std::thread writer([w = fds[1]] {
        const std::string chunk(64 * 1024, 'y');
        for (int i = 0; i < 20; ++i)  // 1.25 MB, more than the 1 MB cap
            if (::write(w, chunk.data(), chunk.size()) < 0) break;
        ::close(w);
    });
    const std::string path = "/dev/fd/" + std::to_string(fds[0]);
    CHECK(message_of([&] { ui::read_text_file(path, ui::kTomlLimitBytes, "TOML file"); }) ==
          path + ": too large (more than 1 MB, limit 1 MB)");
    ::close(fds[0]);
    writer.join();
    REQUIRE(::pipe(fds) == 0);
    REQUIRE(::write(fds[1], "a,b\n", 4) == 4);
    ::close(fds[1]);
    CHECK(ui::read_text_file("/dev/fd/" + std::to_string(fds[0]), ui::kCsvLimitBytes, "CSV file") == "a,b\n");
    ::close(fds[0]);
}

// ---- The program: the cases the hostile-input run found -------------------

TEST_CASE("history --export refuses a device; tone and snapshot leave nothing on a full disk") {
    TempDir t;
    const std::vector<std::string> env = {"BEATLESS_HOME=" + t.file("home")};
    const std::string log = t.file("l.sqlite3");
    REQUIRE(run_program({"drill", "hold-septimal", "--demo", "--log", log}, env).exit_code == 0);
    auto r = run_program({"history", "--log", log, "--with-demo", "--export", "/dev/full"}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: /dev/full: is a device, not a file; give a file name\n");
    CHECK(is_char_device("/dev/full"));
    r = run_program({"history", "--log", log, "--with-demo", "--export", t.path()}, env);
    CHECK(r.err == "beatless: " + t.path() + ": is a folder, not a file; give a file name\n");

    const int before = entries(t.path());
    {
        FileSizeLimit limit(100 * 1024);  // the 204,800-byte truncated files of the report
        r = run_program({"tone", "--root", "D3", "--seconds", "10", "--out", t.file("big.wav")}, env);
        CHECK(r.exit_code == 1);
        CHECK(r.err.find("beatless: " + t.file("big.wav") + ": write failed") == 0);
        r = run_program({"snapshot", "--demo", "--seconds", "0.2", "--out", t.file("big.png")}, env);
        CHECK(r.exit_code == 1);
        CHECK(r.err == "beatless: " + t.file("big.png") + ": cannot be written (File too large)\n");
    }
    CHECK(entries(t.path()) == before);  // no big.wav, no big.png, no temporaries
    r = run_program({"tone", "--root", "D3", "--out", t.file("none/x.wav")}, env);
    CHECK(r.err == "beatless: " + t.file("none/x.wav") + ": the folder " + t.file("none") +
                       " does not exist (create it first)\n");
}

TEST_CASE("the practice log: never made of another file, a device or a missing folder") {
    TempDir t;
    const std::vector<std::string> env = {"BEATLESS_HOME=" + t.file("home")};
    REQUIRE(run_program({"tone", "--root", "D3", "--seconds", "0.5", "--out", t.file("take.wav")}, env).exit_code == 0);
    const std::string wav = slurp(t.file("take.wav"));
    auto r = run_program({"history", "--log", t.file("take.wav")}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: practice log " + t.file("take.wav") +
                       ": is not a practice log (not an SQLite file); give a new file name\n");
    CHECK(slurp(t.file("take.wav")) == wav);
    r = run_program({"history", "--log", "/dev/null"}, env);
    CHECK(r.exit_code == 1);
    CHECK(!fs::exists("/dev/null-journal"));
    CHECK(!fs::exists("/dev/null-wal"));
    r = run_program({"drill", "hold-septimal", "--demo", "--log", t.file("missing/x.sqlite3")}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: " + t.file("missing/x.sqlite3") + ": the folder " + t.file("missing") +
                       " does not exist (create it first)\n");
    CHECK(!fs::exists(t.file("missing")));
}

TEST_CASE("inputs: devices and FIFOs given as files get their own line, without reading a byte") {
    TempDir t;
    const std::vector<std::string> env = {"BEATLESS_HOME=" + t.file("home")};
    REQUIRE(run_program({"tone", "--root", "D3", "--ratio", "3/2", "--seconds", "1", "--out", t.file("ok.wav")}, env)
                .exit_code == 0);
    const std::string fifo = t.file("pipe");
    REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
    auto r = run_program({"analyze", t.file("ok.wav"), "--targets", "/dev/zero"}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: /dev/zero: is a device, not a TOML file\n");
    r = run_program({"history", "--log", t.file("l.sqlite3"), "--import", "/dev/zero"}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: /dev/zero: is a device, not a CSV file\n");
    r = run_program({"history", "--log", t.file("l.sqlite3"), "--import", fifo},
                    env);  // used to wait for a writer forever
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: " + fifo +
                       ": is a named pipe (FIFO), not a CSV file; save it to a file, or pass it as <(command)\n");
    for (const char* dev : {"/dev/zero", "/dev/urandom"}) {
        r = run_program(std::vector<std::string>{"track", dev}, env);
        CHECK(r.exit_code == 1);
        CHECK(r.err == std::string("beatless: ") + dev + ": is a device, not a sound file\n");
    }
    r = run_program({"track", fifo}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: " + fifo + ": is a pipe (FIFO), not a sound file; save the sound to a file first\n");
    // A TOML file past the 1 MB cap (sparse, so nothing is written).
    put(t.file("big.toml"), "kind = \"targets\"\n");
    fs::resize_file(t.file("big.toml"), 3u << 20);
    r = run_program({"analyze", t.file("ok.wav"), "--targets", t.file("big.toml")}, env);
    CHECK(r.err == "beatless: " + t.file("big.toml") + ": too large (3 MB, limit 1 MB)\n");
}
