#!/usr/bin/python3
"""The live path end to end through a private pulse server (null sinks).

Starts `pulseaudio -n` (or, given "pipewire", PipeWire's pulse server with
its session manager on a private D-Bus bus) in a temporary runtime directory
with a null sink `room` (48 kHz), the default, and a second, `hall`. A null sink
with no player renders in 2-s chunks, so a silent keeper (`pacat` from
/dev/zero) plays into `room` the whole time, clocking it as a sound card would.
  1. `devices` lists the server's sources and sinks with the defaults marked;
  2. device selection: ten runs in a row pick 'room.monitor', saying why;
  3. a generated take (a drone on D3 and a voice at 7/5 sung 6 cents flat)
     played with paplay into the sink while `listen` reads the monitor: at
     least 90 % of the steady part read as 7/5, the median deviation within
     0.5 cent of -6 cents;
  4. `listen --drone --level-db -30`: the drone reaches the sink, its level
     measured on the monitor with numpy within 1 dB of -30 dBFS RMS;
  5. the server killed and restarted mid-run: readings stop, resume within
     3 s of the server's return, and `--seconds` ends the run on time
     (lost_and_back, which tests/alsa/check_alsa_live.py uses too).
Skips (exit 77) when a server's package or pulseaudio-utils is missing. Every step has
a timeout; the servers and every child are killed at the end.
Usage: check_pulse_live.py path/to/beatless [pulseaudio|pipewire]
"""
import json
import math
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time

import numpy as np
from scipy.io import wavfile

BEATLESS = sys.argv[1]
RATE = 48000
D3_HZ = 146.832  # ISO 16 (A4 = 440 Hz), 12-TET: 440 * 2**(-19/12) = 146.832 Hz
children = []
failures = []
checks = [0]


def check(cond, what):
    checks[0] += 1
    print(("ok   " if cond else "FAIL ") + what, flush=True)
    if not cond:
        failures.append(what)


def stop(p, sig=signal.SIGTERM):
    if p is None or p.poll() is not None:
        return
    try:
        os.killpg(p.pid, sig)
    except ProcessLookupError:
        return
    try:
        p.wait(timeout=5)
    except subprocess.TimeoutExpired:
        os.killpg(p.pid, signal.SIGKILL)
        p.wait(timeout=5)


class Server:
    """A private pulse server with null sinks, and a silent keeper playing into `room`.
    kind "pulseaudio": `pulseaudio -n`; kind "pipewire": a private D-Bus session bus,
    pipewire, wireplumber (its session manager needs the bus) and pipewire-pulse."""

    def __init__(self, runtime, kind):
        self.runtime, self.kind = runtime, kind
        self.env = dict(os.environ, XDG_RUNTIME_DIR=runtime, PULSE_RUNTIME_PATH=os.path.join(runtime, "pulse"),
                        HOME=runtime, PULSE_STATE_PATH=os.path.join(runtime, "state"),
                        PULSE_SERVER="unix:" + os.path.join(runtime, "pulse", "native"),
                        DBUS_SESSION_BUS_ADDRESS="unix:path=" + os.path.join(runtime, "bus"))
        self.procs = []

    def spawn(self, args):
        p = subprocess.Popen(args, env=self.env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
        children.append(p)
        self.procs.append(p)
        return p

    def pactl(self, *args):
        return subprocess.run(["pactl"] + list(args), env=self.env, capture_output=True, text=True, timeout=5).returncode == 0

    def start(self):
        if self.kind == "pulseaudio":
            self.spawn(["pulseaudio", "-n", "--daemonize=no", "--exit-idle-time=-1", "--use-pid-file=no",
                        "-L", "module-native-protocol-unix",
                        "-L", "module-null-sink sink_name=room rate=48000",
                        "-L", "module-null-sink sink_name=hall rate=48000",
                        "--log-target=stderr", "--log-level=error"])
        else:
            self.spawn(["dbus-daemon", "--session", "--address=" + self.env["DBUS_SESSION_BUS_ADDRESS"], "--nofork", "--nopidfile"])
            time.sleep(0.3)
            self.spawn(["pipewire"])
            time.sleep(0.5)
            self.spawn(["wireplumber"])
            self.spawn(["pipewire-pulse"])
        deadline = time.time() + 15
        while time.time() < deadline and not self.pactl("info"):
            time.sleep(0.1)
        if self.kind == "pipewire":
            for sink in ("room", "hall"):
                self.pactl("load-module", "module-null-sink", "sink_name=" + sink, "rate=48000")
        while time.time() < deadline:
            if self.pactl("set-default-sink", "room") and self.pactl("set-default-source", "room.monitor"):
                keeper = subprocess.Popen(["pacat", "-p", "--raw", "--latency-msec=20", "-d", "room"], env=self.env,
                                          stdin=open("/dev/zero", "rb"), stdout=subprocess.DEVNULL,
                                          stderr=subprocess.DEVNULL, start_new_session=True)
                children.append(keeper)
                self.procs.append(keeper)
                return
            time.sleep(0.1)
        raise RuntimeError("%s did not come up within 15 s" % self.kind)

    def kill(self):
        for p in reversed(self.procs):
            stop(p, signal.SIGKILL)
        self.procs = []


def write_take(path, seconds, drone=True, voice_start_s=0.5):
    """A drone on D3 (partials 1..6 at 1/k) and from voice_start_s a voice at 7/5 sung 6 cents flat
    (partials 1..8 at 1/k, 4 times the drone's amplitude), 16-bit."""
    t = np.arange(int(seconds * RATE)) / RATE
    x = np.zeros_like(t)
    if drone:
        for k in range(1, 7):
            x += 0.02 / k * np.sin(2 * np.pi * k * D3_HZ * t)
    voice_hz = D3_HZ * 7 / 5 * 2 ** (-6 / 1200)
    env = np.clip((t - voice_start_s) / 0.05, 0, 1) * np.clip((seconds - 0.1 - t) / 0.05, 0, 1)
    for k in range(1, 9):
        x += env * 0.08 / k * np.sin(2 * np.pi * k * voice_hz * t)
    wavfile.write(path, RATE, (x * 32767).astype(np.int16))
    return voice_start_s


class Listener:
    """`beatless listen` with every stdout line and stderr line stamped on arrival (wall time)."""

    def __init__(self, args, env, home):
        self.t0 = time.time()
        self.p = subprocess.Popen([BEATLESS, "listen"] + args, env=dict(env, BEATLESS_HOME=home),
                                  stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, start_new_session=True)
        children.append(self.p)
        self.out, self.err = [], []
        self.threads = [threading.Thread(target=self._read, args=(self.p.stdout, self.out), daemon=True),
                        threading.Thread(target=self._read, args=(self.p.stderr, self.err), daemon=True)]
        for th in self.threads:
            th.start()

    def _read(self, f, into):
        for line in f:
            into.append((time.time(), line.rstrip("\n")))

    def wait(self, timeout):
        try:
            self.p.wait(timeout=timeout)
        except subprocess.TimeoutExpired:
            stop(self.p, signal.SIGKILL)
        for th in self.threads:
            th.join(timeout=5)
        return self.p.returncode

    def readings(self):
        return [(at, json.loads(l)) for at, l in self.out if l.startswith("{")]

    def stderr_text(self):
        return "\n".join(l for _, l in self.err)


def lost_and_back(server, listen_args, take, home, when_up=None):
    """`listen` (listen_args, with --seconds 8) reading a take played into `room`; the server
    killed 2.5 s in and restarted 2 s later (then when_up(), if given): readings stop, resume
    within 3 s of its return, the run ends on time, and stderr says the input stopped and came back.
    Returns the Listener and the wall times (killed_at, back_at)."""
    env = server.env

    def play():
        p = subprocess.Popen(["paplay", "-d", "room", take], env=env, stderr=subprocess.DEVNULL, start_new_session=True)
        children.append(p)
        return p

    player = play()
    time.sleep(0.3)
    ls = Listener(listen_args, env, home)
    time.sleep(2.5)
    server.kill()
    stop(player, signal.SIGKILL)
    killed_at = time.time()
    time.sleep(2.0)
    back_at = time.time()  # the server starts now (it may answer before start() returns)
    server.start()
    if when_up:
        when_up()
    player = play()
    code = ls.wait(25)
    ended_at = time.time()
    stop(player, signal.SIGKILL)
    print("     | %s" % ls.stderr_text().replace("\n", "\n     | "))
    got = [(at, x) for at, x in ls.readings() if x["f0_hz"]]
    before = [at for at, _ in got if at < killed_at]
    during = [at for at, _ in got if killed_at + 1.0 < at < back_at]
    after = [at for at, _ in got if at >= back_at]
    check(len(before) > 150, "readings before the server died (%d; 200 a second once started)" % len(before))
    check(len(during) == 0, "no readings while the server is gone, from 1 s after the loss (a busy machine may still be analysing audio heard before it) (%d)" % len(during))
    check(bool(after) and after[0] - back_at <= 3.0,
          "readings resume %.2f s after the server's return (within 3 s)" % ((after[0] - back_at) if after else float("inf")))
    # On time: from the program's first line (it has found and opened its device; a
    # ThreadSanitizer build takes ~1.3 s to get there) to its exit, at most 1.5 s past the
    # 8 s + 1 s by the clock that --seconds allows a device that went away.
    started_at = ls.err[0][0] if ls.err else ls.t0
    check(code == 0 and ended_at - started_at <= 8.0 + 1.0 + 1.5,
          "the 8-s run ends on time: %.2f s of wall time from its first line (%.2f s from its launch), exit %s" %
          (ended_at - started_at, ended_at - ls.t0, code))
    err = ls.stderr_text()
    check("stopped delivering audio" in err and "is back" in err, "stderr says the input stopped and came back")
    return ls, killed_at, back_at


def main():
    kind = sys.argv[2] if len(sys.argv) > 2 else "pulseaudio"
    servers = ["pulseaudio"] if kind == "pulseaudio" else ["dbus-daemon", "pipewire", "wireplumber", "pipewire-pulse"]
    for tool in servers + ["pactl", "pacat", "paplay", "parecord"]:
        if shutil.which(tool) is None:
            print("SKIP: %s is not installed (Debian: %s, pulseaudio-utils; CI installs them from .ci/debian-packages)" %
                  (tool, "pulseaudio" if kind == "pulseaudio" else "dbus-daemon, pipewire, wireplumber, pipewire-pulse"))
            return 77
    host = "PulseAudio" if kind == "pulseaudio" else "PipeWire"
    runtime = tempfile.mkdtemp(prefix="beatless-%s-" % kind)
    os.chmod(runtime, 0o700)
    home = os.path.join(runtime, "home")
    server = Server(runtime, kind)
    server.start()
    env = server.env

    # 1. The device list.
    r = subprocess.run([BEATLESS, "devices"], env=env, capture_output=True, text=True, timeout=30)
    rows = [l for l in r.stdout.splitlines() if host in l]
    check(r.returncode == 0 and any("room.monitor" in l and "default input" in l for l in rows),
          "devices lists the server's default source 'room.monitor', marked as the default input")
    check(any(l.split()[1] == "room" and "default output" in l for l in rows), "devices lists the default sink 'room', marked")
    check(any("hall.monitor" in l and "default" not in l for l in rows), "devices lists the other source 'hall.monitor', unmarked")
    check(r.stderr == "", "devices prints nothing on stderr")

    # 2. Device selection: the same choice ten runs in a row.
    chosen = []
    for _ in range(10):
        r = subprocess.run([BEATLESS, "listen", "--seconds", "0.3"], env=dict(env, BEATLESS_HOME=home),
                           capture_output=True, text=True, timeout=30)
        line = [l for l in r.stderr.splitlines() if l.startswith("beatless: input ")]
        chosen.append(line[0].split(":")[1].strip() + " / " + line[0].split("chosen as ")[-1] if line else "(none)")
    print("     | " + chosen[0])
    check(len(set(chosen)) == 1 and "'room.monitor'" in chosen[0] and "the sound server's default source" in chosen[0],
          "ten runs in a row choose 'room.monitor' as the sound server's default source (%d distinct)" % len(set(chosen)))

    # 3. A take played into the sink, read from its monitor.
    take = os.path.join(runtime, "take.wav")
    voice_start = write_take(take, 4.0)
    ls = Listener(["--targets", "tritones", "--root", "D3", "--seconds", "5"], env, home)
    # Played once the program reads (its first reading is out), so the note is heard from its start: with a fixed
    # 0.5 s from the launch, a program slower to start (a sanitizer build, a busy machine) heard the voice only from
    # mid-note, and the steady part, timed from the voice's first readings, ran past the note's end.
    deadline = time.time() + 10
    while time.time() < deadline and not any(l.startswith("{") for _, l in ls.out):
        time.sleep(0.02)
    time.sleep(0.2)
    played_at = time.time()
    subprocess.run(["paplay", "-d", "room", take], env=env, timeout=20)
    ls.wait(20)
    got = ls.readings()
    # Stream time of the voice's start. The wall clock places it only roughly (paplay's own start through the server
    # varies: the estimate was 0.09-0.19 s early on PipeWire here, once 0.9 s on PulseAudio), so it is
    # taken from the readings: the first of ten in a row within 50 c of the voice's true pitch (7/5 six cents
    # flat over D3). The steady part is then fixed by the take's own timing; any reading in it may still fail.
    first_stream_t = got[0][1]["t"] - (got[0][0] - ls.t0) if got else 0.0
    voice_hz = 146.832 * 1.4 * 2.0 ** (-6.0 / 1200.0)
    near = [x.get("f0_hz") is not None and abs(1200.0 * math.log2(x["f0_hz"] / voice_hz)) < 50.0 for _, x in got]
    onset = next((got[i][1]["t"] for i in range(len(got) - 9) if all(near[i:i + 10])), None)
    found = onset is not None
    if onset is None:
        onset = played_at - ls.t0 + first_stream_t + voice_start
    steady = [x for _, x in got if onset + 0.3 <= x["t"] <= onset + (4.0 - voice_start) - 0.4]
    as_75 = [x for x in steady if x["target"] == "7/5"]
    devs = sorted(x["dev_cents"] for x in as_75)
    median = devs[len(devs) // 2] if devs else float("nan")
    print("     | %s" % ls.stderr_text().replace("\n", "\n     | "))
    # Where a loss lies, so one mid-note is told from one at the note's edges: the voice's start as found, every
    # reading of the steady part not read as 7/5 (from the voice's start), and any step in stream time over a hop.
    print("     | the voice starts at %.3f s of stream time (%s)" % (onset, "from the readings" if found else "by the wall clock"))
    off = [x for x in steady if x["target"] != "7/5"]
    if off:
        print("     | not read as 7/5: %d, at %s s after the voice's start" %
              (len(off), " ".join("%.3f%s" % (x["t"] - onset, "" if x["f0_hz"] else "(unvoiced)") for x in off[:20])))
    steps = [(a["t"], b["t"] - a["t"]) for a, b in zip(steady, steady[1:]) if b["t"] - a["t"] > 0.0075]
    if steps:
        print("     | steps in stream time over 7.5 ms: %s" % " ".join("%.3f+%.4f" % (t - onset, d) for t, d in steps[:20]))
    check(len(steady) > 300 and len(as_75) >= 0.9 * len(steady),
          "the steady part is read as 7/5: %d of %d readings (at least 90 %%)" % (len(as_75), len(steady)))
    check(abs(median - (-6.0)) <= 0.5, "the median deviation is %.2f cents, within 0.5 cent of -6 cents" % median)

    # 4. The drone reaches the sink: its level on the monitor.
    rec = os.path.join(runtime, "monitor.f32")
    ls = Listener(["--drone", "--level-db", "-30", "--root", "D3", "--seconds", "3"], env, home)
    # Recorded from when the start line names the drone's sink: a fixed wait from the launch measured silence too when
    # the program took longer than that to start on a busy machine, and a server may start a new stream late. The level
    # is measured from 0.1 s after the drone arrives (its 50 ms fade-in), and how late it arrived is shown.
    deadline = time.time() + 10
    while time.time() < deadline and not any("output 'room'" in l for _, l in ls.err):
        time.sleep(0.02)
    # Raw float32 stereo, each channel measured: a mono recording would be the server's
    # downmix, which PipeWire makes 3 dB louder than PulseAudio (no header for a stopped recorder to leave unfinished).
    with open(rec, "wb") as f:
        recorder = subprocess.Popen(["pacat", "-r", "--raw", "--latency-msec=20", "-d", "room.monitor", "--rate=48000", "--channels=2",
                                     "--format=float32le"], env=env, stdout=f, stderr=subprocess.DEVNULL, start_new_session=True)
        children.append(recorder)
        time.sleep(2.0)
        stop(recorder, signal.SIGINT)
    ls.wait(20)
    print("     | %s" % ls.stderr_text().replace("\n", "\n     | "))
    x = np.fromfile(rec, dtype="<f4").astype(np.float64)
    x = x[: len(x) // 2 * 2].reshape(-1, 2)
    step = int(0.01 * RATE)
    rms = [np.sqrt(np.mean(x[i:i + step, 0] ** 2)) for i in range(0, len(x) - step + 1, step)]
    arrival = next((i for i, v in enumerate(rms) if v > 10 ** (-40 / 20)), None)
    if arrival is not None:
        print("     | the drone arrives %.2f s into the recording" % (arrival * 0.01))
        x = x[arrival * step + int(0.1 * RATE):][: int(1.2 * RATE)]
    if arrival is not None and len(x) > int(0.5 * RATE):
        levels = [20 * math.log10(max(np.sqrt(np.mean(x[:, c] ** 2)), 1e-12)) for c in (0, 1)]
        ok = all(abs(v - (-30.0)) <= 1.0 for v in levels)
        check(ok, "the drone on the monitor: %.2f and %.2f dBFS RMS (left, right) over %.2f s (numpy), within 1 dB of -30" %
              (levels[0], levels[1], len(x) / RATE))
        if not ok:  # gaps (underflows) against a level that is wrong throughout
            step = int(0.1 * RATE)
            print("     | left channel per 100 ms (dBFS RMS): %s" % " ".join(
                "%.1f" % (20 * math.log10(max(np.sqrt(np.mean(x[i:i + step, 0] ** 2)), 1e-12)))
                for i in range(0, len(x) - step + 1, step)))
    else:
        check(False, "the drone reached the monitor with over 0.5 s of it recorded (%d frames after it arrived)" % len(x))
    check(("output 'room' (%s)" % host) in ls.stderr_text() and "default sink" in ls.stderr_text(),
          "the drone plays on the default sink 'room', and the start line says so")

    # 5. The server killed and restarted mid-run.
    take = os.path.join(runtime, "long.wav")
    write_take(take, 30.0, voice_start_s=0.0)
    lost_and_back(server, ["--input", "room.monitor", "--targets", "tritones", "--root", "D3", "--seconds", "8"], take, home)
    server.kill()
    shutil.rmtree(runtime, ignore_errors=True)
    print("%d passed, %d failed" % (checks[0] - len(failures), len(failures)))
    return 1 if failures else 0


if __name__ == "__main__":
    code = 1
    try:
        code = main()
    except Exception as e:  # a hang or crash fails the test, never blocks it
        print("FAIL: %s" % e)
        code = 1
    finally:
        for c in reversed(children):
            stop(c, signal.SIGKILL)
    sys.exit(code)
