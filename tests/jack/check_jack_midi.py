#!/usr/bin/python3
"""MIDI out end to end through a real MIDI server: JACK's dummy driver.

Starts a private jackd (dummy driver) and jack_midi_dump (jackd2's MIDI
monitor, which registers the input port midi-monitor:input and prints every
event's bytes), then runs `beatless listen --demo --midi-out midi-monitor`
and decodes what arrived:
  1. `devices` lists the port under MIDI;
  2. MTS mode, root D3, fixed target 7/5, drone fifth: tuning program 0
     selected by RPN 3, a real-time single-note tuning change (F0 7F 7F 08 02
     ...) retuning key 56 to 7/5 over D3 with the word from the MTS formula
     (MMA CA-020: semitone over note 0, note 69 = 440 Hz, 14-bit fraction of
     16384), the notes on, and at exit notes off and the keys given back to
     12-TET;
  3. bend mode: RPN 0 (bend range 2 semitones) on channels 2 and 3, pitch
     bend 8192 + round(8192 * cents / 200) (MIDI 1.0: centre 2000H), notes on;
  4. a missing port: one line, exit 1; the monitor quits mid-session: one
     line says the port is gone, readings go on, and when a monitor comes
     back the drone sounds again;
and a MIDI keyboard (tests' midi_keys, an RtMidi JACK sender) sets the root.
Skips (exit 77) when jackd or jack_midi_dump is missing. Every step has a
timeout; jackd and every child are killed at the end, whatever happens.
Usage: check_jack_midi.py path/to/beatless path/to/midi_keys
"""
import json
import math
import os
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import time

from jack_rig import jack_ports, run, stop

BEATLESS = sys.argv[1]
KEYS = sys.argv[2] if len(sys.argv) > 2 else ""
# One fixed name: JACK keeps a server in its registry (/dev/shm, at most 8) until it exits cleanly, and reclaims a
# dead one's slot only for a server of the same name, so names with a process id filled the registry after a few
# runs that were killed ("Too many servers already active"). ctest runs the sound-server tests one at a time.
SERVER = "beatless-test-midi"
ENV = dict(os.environ, JACK_DEFAULT_SERVER=SERVER, JACK_NO_START_SERVER="1")
children = []
failures = []


def check(cond, what):
    print(("ok   " if cond else "FAIL ") + what)
    if not cond:
        failures.append(what)


def start(args, env=None, **kw):
    p = subprocess.Popen(args, env=env or ENV, start_new_session=True, **kw)
    children.append(p)
    return p


def wait_for_port(name, timeout_s=10.0):
    deadline = time.time() + timeout_s
    while time.time() < deadline:
        if name in jack_ports(ENV):
            return True
        time.sleep(0.1)
    return False


def start_monitor(log):
    p = start(["stdbuf", "-o0", "jack_midi_dump"], stdout=open(log, "w"), stderr=subprocess.DEVNULL)
    if not wait_for_port("midi-monitor:input"):
        raise RuntimeError("jack_midi_dump did not register midi-monitor:input")
    return p


def messages(log):
    """Every event's bytes, in order, from jack_midi_dump's lines '   0: b0 65 00 ...'."""
    out = []
    with open(log) as f:
        for line in f.read().replace("\xf7", "").splitlines():
            m = re.match(r"\s*-?\d+: ((?:[0-9a-f]{2} )*[0-9a-f]{2})", line)
            if m:
                out.append([int(b, 16) for b in m.group(1).split()])
    return out


class Listen:
    """beatless listen --demo in the background; its readings go to a file, not a pipe that could fill."""

    def __init__(self, args, seconds, home):
        self.out_path = os.path.join(home, "readings.jsonl")
        self.err_path = os.path.join(home, "listen.err")
        self.p = start([BEATLESS, "listen", "--demo", "--seed", "3", "--seconds", str(seconds)] + args,
                       stdout=open(self.out_path, "w"), stderr=open(self.err_path, "w"), env=dict(ENV, BEATLESS_HOME=home))

    @property
    def returncode(self):
        return self.p.returncode

    def communicate(self, timeout):
        self.p.wait(timeout=timeout)
        with open(self.out_path) as o, open(self.err_path) as e:
            return o.read(), e.read()


def listen(args, seconds, home):
    return Listen(args, seconds, home)


def mts_word(hz):
    """MTS frequency word by the standard's formula (MMA CA-020)."""
    steps = round((69 + 12 * math.log2(hz / 440.0)) * 16384)
    return [steps // 16384, (steps % 16384) >> 7, steps & 0x7F]


D3 = 440.0 * 2 ** ((50 - 69) / 12)  # MIDI 50, ISO 16


def main():
    for tool in ("jackd", "jack_midi_dump", "jack_lsp", "stdbuf"):
        if shutil.which(tool) is None:
            print("SKIP: %s is not installed (jackd2, coreutils); CI installs them from .ci/debian-packages" % tool)
            return 77
    home = tempfile.mkdtemp(prefix="beatless-midi-")
    start(["jackd", "-n", SERVER, "--no-realtime", "-d", "dummy", "-r", "48000", "-p", "256"],
          stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    if not wait_for_port("system:playback_1"):
        raise RuntimeError("jackd did not come up within 10 s")
    log = os.path.join(home, "dump.txt")
    mon = start_monitor(log)

    # PortAudio's ALSA plugins leak outside the project under LeakSanitizer: no leak check for `devices`.
    r = subprocess.run([BEATLESS, "devices"], env=dict(ENV, ASAN_OPTIONS="detect_leaks=0"), capture_output=True, text=True,
                       timeout=30)
    check(r.returncode == 0 and re.search(r"\n\s+1\s+midi-monitor:input\s+jack\s+--midi-out", r.stdout) is not None,
          "devices lists midi-monitor:input as MIDI out port 1 (jack)")

    # 2. MTS: root D3, target 7/5, drone fifth.
    p = listen(["--root", "D3", "--target", "7/5", "--fifth", "--midi-out", "midi-monitor"], 1.0, home)
    out, err = p.communicate(timeout=30)
    # The monitor writes what it received a little after the program exits: wait (up to 5 s) for the last of it,
    # the notes off and the keys given back, before reading the log.
    deadline = time.time() + 5.0
    m = messages(log)
    while time.time() < deadline and not ([0x80, 56, 0] in m and [0x80, 50, 0] in m):
        time.sleep(0.1)
        m = messages(log)
    time.sleep(0.3)
    m = messages(log)
    check(p.returncode == 0, "listen --midi-out exits 0 (%s)" % err.strip().splitlines()[-1:])
    check("keys retuned by MTS single-note tuning" in err and "use --midi-tuning bend" in err,
          "the start line says MTS, and what to do when the synth ignores it")
    check(m[:3] == [[0xB0, 101, 0], [0xB0, 100, 3], [0xB0, 6, 0]], "tuning program 0 selected by RPN 3 first")
    sysex = [x for x in m if x[:6] == [0xF0, 0x7F, 0x7F, 0x08, 0x02, 0x00]]
    want = [56] + mts_word(D3 * 7 / 5)
    check(want == [56, 0x37, 0x69, 0x4F], "7/5 over D3 is key 56, word 37 69 4F by the formula")
    first = sysex[0] if sysex else []
    changes = [first[7 + 4 * i: 11 + 4 * i] for i in range(first[6])] if first else []
    check([50] + mts_word(D3) in changes and [57] + mts_word(D3 * 1.5) in changes and want in changes,
          "one single-note change retunes the root (key 50), the fifth (57) and 7/5 (56)")
    check(first[-1:] == [0xF7] and len(first) == 8 + 4 * first[6] if first else False, "the message has the standard's length")
    check([0x90, 56, 48] in m and [0x90, 50, 48] in m, "notes on for the root and the target")
    check([0x80, 56, 0] in m and [0x80, 50, 0] in m, "notes off at exit")
    check(sysex and [56, 56, 0, 0] in [sysex[-1][7 + 4 * i: 11 + 4 * i] for i in range(sysex[-1][6])],
          "at exit key 56 goes back to 12-TET (38 00 00)")

    # 3. Bend: one channel per voice.
    open(log, "w").close()
    stop(mon)
    mon = start_monitor(log)
    p = listen(["--root", "D3", "--target", "7/5", "--midi-out", "midi-monitor", "--midi-tuning", "bend"], 1.0, home)
    out, err = p.communicate(timeout=30)
    time.sleep(0.3)
    m = messages(log)
    check(p.returncode == 0 and "pitch bend per note on channels 2-16, bend range +-2 semitones (RPN 0)" in err,
          "bend mode says its channels and range")
    for ch in (1, 2):
        check([[0xB0 | ch, 101, 0], [0xB0 | ch, 100, 0], [0xB0 | ch, 6, 2], [0xB0 | ch, 38, 0]] ==
              [x for x in m if x[0] == 0xB0 | ch][:4], "RPN 0 = 2 semitones on MIDI channel %d" % (ch + 1))
    cents = 1200 * math.log2(D3 * 1.4 / 440) + 6900 - 5600  # 7/5 over D3 from key 56
    v = 8192 + round(8192 * cents / 200)
    check(v == 7476, "7/5 over D3 bends key 56 by %.3f c: %d" % (cents, v))
    check([0xE1, 0, 64] in m and [0x91, 50, 48] in m, "the root: channel 2, bend 8192, key 50")
    check([0xE2, v & 0x7F, v >> 7] in m and [0x92, 56, 48] in m, "7/5: channel 3, bend %d, key 56" % v)

    # 4. A missing port, and a port that goes away and comes back.
    r = subprocess.run([BEATLESS, "listen", "--demo", "--seconds", "0.5", "--midi-out", "nosuch"], env=dict(ENV, BEATLESS_HOME=home),
                       capture_output=True, text=True, timeout=30)
    check(r.returncode == 1, "a missing port: exit 1")
    check(r.stderr == "beatless: MIDI output port 'nosuch': not found (ports: midi-monitor:input)\n",
          "a missing port: one line naming it and the ports (%r)" % r.stderr)
    p = listen(["--root", "D3", "--midi-out", "midi-monitor"], 6.0, home)
    time.sleep(1.5)
    stop(mon)
    time.sleep(1.8)
    mon = start_monitor(log)
    out, err = p.communicate(timeout=30)
    rs = [json.loads(l) for l in out.splitlines() if l.startswith("{")]
    check(p.returncode == 0, "the session goes on when the port goes (exit 0)")
    check("beatless: MIDI output port 'midi-monitor:input': gone; the session goes on without it\n" in err,
          "one line says the port is gone (%r)" % err)
    check("beatless: MIDI output port 'midi-monitor:input': back; sounding again\n" in err, "one line says it is back")
    check(len(rs) > 0 and max(r["t"] for r in rs) > 5.0, "readings go on after the port went")
    time.sleep(0.2)
    check([0x90, 50, 48] in messages(log), "the new monitor hears the drone again")

    # 5. A keyboard sets the root.
    if KEYS:
        keys = start([KEYS, "beatless-test-keys", "55", "2.0"], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        if not wait_for_port("beatless-test-keys:keys"):
            raise RuntimeError("midi_keys did not register its port")
        p = listen(["--root", "D3", "--midi-in", "beatless-test-keys", "--midi-out", "midi-monitor"], 3.5, home)
        out, err = p.communicate(timeout=30)
        keys.wait(timeout=10)
        check("beatless: keyboard: root G3 = 195.998 Hz\n" in err, "a key on the keyboard sets the root: G3 (%r)" % err)
        rs = [json.loads(l) for l in out.splitlines() if l.startswith("{")]
        check([0x90, 55, 48] in messages(log), "and the drone moves to key 55")
    return 1 if failures else 0


if __name__ == "__main__":
    run(main, children)
