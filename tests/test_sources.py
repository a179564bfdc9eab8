"""Live sources without hardware: register formats and byte orders, lines read strictly as
declared (the table of issue 26), a growing log (rotation, truncation, a FIFO, a device refused),
a serial line through a pseudo-terminal, plausibility."""

from __future__ import annotations

import datetime as dt
import os
import struct
import time

import pytest

from benchwarden.errors import InputError
from benchwarden.live.lines import (
    MAX_LINE_BYTES,
    OVERLONG,
    Dialect,
    LineError,
    Splitter,
    parse_line,
)
from benchwarden.live.sources import (
    Converter,
    FileSource,
    Plausibility,
    Sample,
    SerialSource,
    decode,
    encode,
    to_pressure,
)

AMB = 101325.0
#: a bar is 1e5 Pa, a psi 6894.757293168361 Pa (0.45359237 kg × 9.80665 m/s² / 0.0254² m², by definition)
PSI = 0.45359237 * 9.80665 / 0.0254 ** 2
BAR = Converter("pressure", 1.0, 0.0, "bar", AMB)


def RAW(x):
    return x


NOW = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)

# --------------------------------------------------------------------------- register formats

#: byte positions on the wire for each order, written out by hand from the ABCD notation
#: (A = the value's most significant byte; e.g. CDAB for 32 bits sends C D A B)
_WIRE = {2: {"abcd": [0, 1], "cdab": [0, 1], "badc": [1, 0], "dcba": [1, 0]},
         4: {"abcd": [0, 1, 2, 3], "cdab": [2, 3, 0, 1], "badc": [1, 0, 3, 2], "dcba": [3, 2, 1, 0]},
         8: {"abcd": [0, 1, 2, 3, 4, 5, 6, 7], "cdab": [6, 7, 4, 5, 2, 3, 0, 1],
             "badc": [1, 0, 3, 2, 5, 4, 7, 6], "dcba": [7, 6, 5, 4, 3, 2, 1, 0]}}
_CODE = {"int16": ">h", "uint16": ">H", "int32": ">i", "uint32": ">I", "float32": ">f", "float64": ">d"}
_VALUES = {"int16": -1234, "uint16": 54321, "int32": -123456789, "uint32": 3_000_000_000, "float32": 149.875,
           "float64": 63.87123456789}


def _words(typ: str, order: str, v: float) -> list[int]:
    # independent encoding with struct (IEEE 754 / two's complement, big-endian), then the bytes
    # put in wire order by the hand-written table above
    raw = struct.pack(_CODE[typ], int(v) if "int" in typ else v)
    wire = bytes(raw[i] for i in _WIRE[len(raw)][order])
    return [int.from_bytes(wire[i:i + 2], "big") for i in range(0, len(wire), 2)]


@pytest.mark.parametrize("typ", list(_CODE))
@pytest.mark.parametrize("order", ["abcd", "cdab", "badc", "dcba"])
def test_every_register_format_and_byte_order_reads_what_struct_packed(typ, order):
    words = _words(typ, order, _VALUES[typ])
    assert decode(words, f"{typ}-{order}") == pytest.approx(_VALUES[typ], rel=1e-7)
    assert encode(_VALUES[typ], f"{typ}-{order}") == words
    if order == "abcd":
        assert decode(words, typ) == decode(words, f"{typ}-abcd")


def test_float32_swapped_stays_the_name_of_float32_cdab():
    # 150.0 is 0x43160000 in IEEE 754 single precision (from memory; struct agrees below)
    assert struct.pack(">f", 150.0) == bytes([0x43, 0x16, 0, 0])
    assert decode([0x0000, 0x4316], "float32-swapped") == decode([0x0000, 0x4316], "float32-cdab") == 150.0


def test_bad_register_input_is_refused():
    with pytest.raises(InputError):
        decode([1], "float32")
    with pytest.raises(InputError):
        decode([70000], "uint16")
    with pytest.raises(InputError):
        decode([1, 2], "float64")
    with pytest.raises(InputError, match="byte order"):
        decode([1, 2], "float32-xyzw")


def test_scale_offset_and_gauge_or_absolute():
    assert to_pressure(4000, 0.05, 0.0, "bar", AMB) == pytest.approx(200e5 + AMB)
    assert to_pressure(14.7, 1.0, 0.0, "psia", AMB) == pytest.approx(14.7 * PSI)


# --------------------------------------------------------------------------- lines as declared


PLAIN = Dialect()


def _read(line: str, dialect: Dialect = PLAIN, header: list[str] | None = None):
    got = parse_line(line, dialect, header)
    return (BAR.in_unit(got.value, got.unit) if got.unit else BAR(got.value)), got.at


UTC_CSV = Dialect(",", time_column=1, value_column=2, timezone="UTC")


@pytest.mark.parametrize("line, dialect, words", [
    ("P1: 63.87 bar", Dialect(), "not a number"),                               # channel prefix
    ("63,75 bar", Dialect(), "decimal point"),                                  # decimal comma, point declared
    ("P1 (bar)", Dialect(), "not a number"),                                    # a header read as data
    ("2026-12-02 09:00:00,21.3,64.02", Dialect(",", time_column=1), "2 value columns"),  # T and P, none named
    ("1764666000,64.02", UTC_CSV, "time_format"),                              # epoch where ISO is declared
    ("02.12.2026 09:00:00;64,02", Dialect(";", time_column=1, value_column=2), "decimal point"),
    ("2026-12-02 09:00:00,64.02 degC", UTC_CSV, "not a pressure unit"),
])
def test_a_line_that_does_not_read_as_declared_is_refused_with_its_reason(line, dialect, words):
    with pytest.raises((LineError, InputError), match=words):
        _read(line, dialect)


def test_each_row_of_the_issue_reads_right_when_declared():
    # the rows of issue 26's table, each with the dialect that declares it
    assert _read("P1: 63.87 bar", Dialect(pattern=r"P1:\s*(?P<value>\S+)\s*(?P<unit>\w+)"))[0] == \
        pytest.approx(63.87e5 + AMB)
    assert _read("63,75 bar", Dialect(decimal=","))[0] == pytest.approx(63.75e5 + AMB)
    assert _read("925.3 psi")[0] == pytest.approx(925.3 * PSI + AMB)          # the line's unit, not the profile's
    p, at = _read("2026-12-02 09:00:00,64.02", UTC_CSV)
    assert p == pytest.approx(64.02e5 + AMB) and at == dt.datetime(2026, 12, 2, 9, tzinfo=dt.UTC)
    p, at = _read("02.12.2026 09:00:00;64,02", Dialect(";", ",", 1, 2, "%d.%m.%Y %H:%M:%S", "Europe/Berlin"))
    assert p == pytest.approx(64.02e5 + AMB) and at == dt.datetime(2026, 12, 2, 8, tzinfo=dt.UTC)  # CET = UTC+1
    header = "timestamp,T (degC),P1 (bar)".split(",")
    p, _ = _read("2026-12-02T09:00:00Z,21.3,64.02", Dialect(",", time_column="timestamp", value_column="P1 (bar)"),
                 header)
    assert p == pytest.approx(64.02e5 + AMB)
    p, at = _read("1764666000\t64.02", Dialect("\t", time_column=1, value_column=2, time_format="epoch"))
    assert at == dt.datetime(2025, 12, 2, 9, tzinfo=dt.UTC)   # 1764666000 s: `date -u -d @1764666000` (GNU date)
    _, at = _read("1764666000123 64.02", Dialect("whitespace", time_column=1, value_column=2, time_format="epoch-ms"))
    assert at == dt.datetime(2025, 12, 2, 9, 0, 0, 123000, tzinfo=dt.UTC)


def test_cr_lf_and_crlf_all_end_lines_even_split_across_reads():
    sp = Splitter()
    assert sp.feed(b"1\r2\n3\r\n4\r") == [b"1", b"2", b"3", b"4"]
    assert sp.feed(b"\n5\n") == [b"5"]          # the LF of a CRLF cut between two reads is no empty line
    assert sp.feed(b"6") == [] and sp.feed(b"\r\r7\n") == [b"6", b"", b"7"]


def test_a_line_past_4096_bytes_is_one_bad_line_and_the_buffer_never_grows():
    sp = Splitter()
    out = []
    for _ in range(100):
        out += sp.feed(b"9" * 1000)
        assert len(sp.partial) <= MAX_LINE_BYTES
    out += sp.feed(b"\n1.5\n")
    assert out == [OVERLONG, b"1.5"]
    assert sp.feed(b"x" * MAX_LINE_BYTES + b"\n") == [b"x" * MAX_LINE_BYTES]   # exactly the limit is fine


def test_a_catastrophic_pattern_is_a_bad_sample_in_bounded_time():
    line = "a" * 40 + "!"
    for pattern in (r"(?P<value>(a+)+$)", r"(?P<value>(a|aa)+$)"):
        t0 = time.monotonic()
        with pytest.raises(LineError):
            parse_line(line, Dialect(pattern=pattern))
        assert time.monotonic() - t0 < 5.0   # a bound, not a benchmark: unbounded it runs for minutes


# --------------------------------------------------------------------------- a growing log


def _logger(path, lines, end="\n", mode="a"):
    """A test logger: writes lines as a data logger does."""
    with open(path, mode, newline="") as fh:
        for ln in lines:
            fh.write(ln + end)


def test_growing_file_uses_its_declared_timestamps_and_waits_for_whole_lines(tmp_path):
    log = tmp_path / "log.csv"
    log.write_text("# logger\n2026-12-01T08:00:00+00:00,150.2\n2026-12-01T08:01:00+00:00,150.1\n2026-12-01T08:02")
    src = FileSource(log, BAR, Dialect(",", time_column=1, value_column=2))
    got = list(src.poll(NOW))
    assert [s.at.minute for s in got] == [0, 1]
    assert got[0].value == pytest.approx(150.2e5 + AMB)
    with open(log, "a") as fh:
        fh.write(":00+00:00,150.0\n")
    (s,) = list(src.poll(NOW))
    assert s.at.minute == 2 and s.good


@pytest.mark.parametrize("end", ["\n", "\r", "\r\n"])
def test_every_line_ending_reads_every_line(tmp_path, end):
    log = tmp_path / "p.log"
    _logger(log, ["64.0", "63.9", "63.8", "63.7"], end)
    got = FileSource(log, BAR).poll(NOW)
    assert [round((s.value - AMB) / 1e5, 2) for s in got] == [64.0, 63.9, 63.8, 63.7]


def test_header_lines_are_skipped_and_name_the_columns(tmp_path):
    log = tmp_path / "p.csv"
    _logger(log, ["timestamp,P1 (bar)", "2026-12-02T09:00:00Z,64.02"])
    assert not FileSource(log, BAR, Dialect(",", time_column=1)).poll(NOW)[0].good   # the header is no sample
    got = FileSource(log, BAR, Dialect(",", time_column="timestamp", value_column="P1 (bar)", header_lines=1)).poll(NOW)
    assert len(got) == 1 and got[0].good and got[0].value == pytest.approx(64.02e5 + AMB)


def _values(samples):
    return [round((s.value - AMB) / 1e5, 2) for s in samples if s.good]


def test_rotation_by_rename_reads_the_old_file_to_its_end_then_the_new_from_its_start(tmp_path):
    log = tmp_path / "p.log"
    _logger(log, ["64.0", "63.9"])
    src = FileSource(log, BAR)
    assert _values(src.poll(NOW)) == [64.0, 63.9]
    _logger(log, ["63.8"])                      # written just before the rotation
    log.rename(tmp_path / "p.log.1")
    _logger(log, ["63.7", "63.6", "63.5", "63.4"], mode="w")
    assert _values(src.poll(NOW)) == [63.8, 63.7, 63.6, 63.5, 63.4]
    _logger(log, ["63.3"])
    assert _values(src.poll(NOW)) == [63.3]
    src.close()


def test_copy_truncate_is_read_from_the_new_start(tmp_path):
    log = tmp_path / "p.log"
    _logger(log, ["64.00", "63.90", "63.80"])
    src = FileSource(log, BAR)
    assert len(src.poll(NOW)) == 3
    log.write_text("")                          # copied away and truncated
    _logger(log, ["63.7", "63.6", "63.5", "63.4"])
    assert _values(src.poll(NOW)) == [63.7, 63.6, 63.5, 63.4]
    # truncated and rewritten past the old offset before the next poll: the changed start shows it
    log.write_text("")
    _logger(log, ["62.00000", "61.90000", "61.80000", "61.70000", "61.60000"])
    assert _values(src.poll(NOW)) == [62.0, 61.9, 61.8, 61.7, 61.6]
    src.close()


def test_a_device_is_refused_and_a_fifo_is_read(tmp_path):
    got = FileSource("/dev/zero", BAR).poll(NOW)
    assert len(got) == 1 and not got[0].good and "character device" in got[0].why and "FIFO" in got[0].why
    fifo = tmp_path / "p.fifo"
    os.mkfifo(fifo)
    src = FileSource(fifo, BAR)
    assert src.poll(NOW) == []                  # nobody writes yet: nothing, no hang
    w = os.open(fifo, os.O_WRONLY | os.O_NONBLOCK)
    try:
        os.write(w, b"64.0\n63.9\n")
        assert _values(src.poll(NOW)) == [64.0, 63.9]
    finally:
        os.close(w)
        src.close()


def test_serial_line_through_a_pseudo_terminal_stamped_when_each_line_arrives():
    master, slave = os.openpty()
    stamps = iter([NOW, NOW + dt.timedelta(seconds=1), NOW + dt.timedelta(seconds=2)])
    src = SerialSource(os.ttyname(slave), BAR, dialect=Dialect(pattern=r"P=(?P<value>[-\d.]+) (?P<unit>\w+)"),
                       timeout_s=2.0, clock=lambda: next(stamps))
    try:
        os.write(master, b"P=148.55 bar T=20.1\r")       # CR only
        s = src.read(NOW + dt.timedelta(hours=1))
        assert s.good and s.value == pytest.approx(148.55e5 + AMB) and s.at == NOW
        os.write(master, b"garbage\r\n")
        bad = src.read(NOW + dt.timedelta(hours=1))
        assert not bad.good and "pattern" in bad.why and bad.at == NOW + dt.timedelta(seconds=1)
    finally:
        src.close()
        os.close(master)
        os.close(slave)


# --------------------------------------------------------------------------- plausibility


def test_a_lying_gauge_never_gives_a_good_zero_and_a_real_step_is_confirmed():
    # a 64 bar cylinder read each second; a one-second fall to 0 is beyond any valve (band 1 bar,
    # a blow-down time constant of 4 s)
    f = Plausibility(0.0, 300e5, 1e5, 0.0, relative_rate_per_s=0.25)

    def at(i, bar):
        return Sample(NOW + dt.timedelta(seconds=i), bar * 1e5, True)

    out = []
    for i, bar in enumerate([64, 64, 0, 64, -50, 1e30, 0, 0, 64, 0, -50, 0, 0, 64]):
        out += f(at(i, bar))
    good = [s.value / 1e5 for s in out if s.good]
    assert 0.0 not in good and good == [64, 64, 64, 64, 64]
    assert [s.status for s in out if s.value == 0.0] == ["implausible"] * 6    # a bad read between confirms nothing
    assert sum(1 for s in out if s.status == "bad") == 3            # −50 and 1e30: outside the range
    assert f(at(10, 198)) == [] and f(at(11, 198)) == []              # a new cylinder: held ...
    assert [s.value / 1e5 for s in f(at(12, 197.9))] == [198, 198, 197.9]   # ... until confirmed
    assert f.allowed(64e5, 1.0) == pytest.approx(1e5 + 64e5 * (1 - 2.718281828459045 ** -0.25))


def _free_port() -> int:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_simulator_served_on_loopback_is_read_by_the_modbus_source():
    # a real pymodbus server on 127.0.0.1 (the simulator) and a real client; bounded in time
    import asyncio
    import threading
    import time

    import pymodbus  # noqa: F401  (imported once here, not by two threads at once)

    from benchwarden.core import gas as g
    from benchwarden.live.simulator import Cylinder, serve
    from benchwarden.live.sources import modbus_tcp

    n2 = g.parse_gas("nitrogen")
    port = _free_port()
    cyl = Cylinder(n2, 0.05, 151.01325e5, 293.15, loss_kg_s=1e-4, speed=600.0)
    t = threading.Thread(target=lambda: asyncio.run(serve(cyl, port, duration_s=4.0)), daemon=True)
    t.start()
    src = modbus_tcp("127.0.0.1", port, 1, 0, "float32", BAR, timeout_s=2.0)
    try:
        first = None
        for _ in range(40):  # the server needs a moment to listen
            first = src.read(NOW)
            if first.good:
                break
            time.sleep(0.05)
        assert first is not None and first.good, first
        assert first.value == pytest.approx(151.01325e5, abs=0.3e5)
        time.sleep(1.0)
        later = src.read(NOW)
        # 600 s of simulated loss at 0.1 g/s = 60 g of 8.5 kg: about 1 bar lower (real-gas balance)
        assert later.good and later.value < first.value - 0.3e5
        temp = modbus_tcp("127.0.0.1", port, 1, 2, "float32", RAW).read(NOW)
        assert temp.good and temp.value == pytest.approx(20.0, rel=1e-6)  # 20 degC, read raw
    finally:
        src.close()
        t.join(timeout=10)
    assert not t.is_alive()


def test_unreachable_modbus_device_is_a_bad_sample_not_a_crash():
    from benchwarden.live.sources import modbus_tcp

    s = modbus_tcp("127.0.0.1", _free_port(), 1, 0, "float32", BAR, timeout_s=0.5).read(NOW)
    assert not s.good and "cannot reach" in s.why and "connection refused" in s.why


def test_profile_source_section_builds_the_source(tmp_path):
    # the demo profile with the commented source switched on, as the README's two-terminal demo
    from pathlib import Path

    from benchwarden.errors import ProfileError
    from benchwarden.live.sources import FileSource, ModbusSource, make_source
    from benchwarden.storage.profile import parse_profile

    demo = (Path(__file__).resolve().parents[1] / "profiles" / "demo-teaching-bench.toml").read_text()
    section = ('\n[supplies.source]\nkind = "modbus-tcp"\nhost = "127.0.0.1"\nport = 5020\ndevice = 1\n'
               'register = 0\nformat = "float32"\nscale = 1.0\noffset = 0.0\nvalue_unit = "bar"\ninterval = "1 s"\n')
    anchor = 'gauge = { range = "315 bar", accuracy_class = 1.6 }\n'
    prof = parse_profile(demo.replace(anchor, anchor + section), "b.toml")
    src = prof.supplies[0].source
    assert src is not None and src.kind == "modbus-tcp" and src.interval == 1.0
    built = make_source(src, prof.ambient_pa)
    assert isinstance(built, ModbusSource)
    built.close()
    log = tmp_path / "p.log"
    log.write_text("")
    filed = parse_profile(demo.replace(anchor, anchor + f'\n[supplies.source]\nkind = "file"\npath = "{log}"\n'),
                          "b.toml")
    assert isinstance(make_source(filed.supplies[0].source, 101325.0), FileSource)
    for unit in (0, 255):  # Modbus/TCP unit ids 0–255
        tcp = parse_profile(demo.replace(anchor, anchor + f'\n[supplies.source]\nkind = "modbus-tcp"\nhost = "h"\n'
                                                          f'device = {unit}\nformat = "float64-dcba"\n'), "b.toml")
        assert tcp.supplies[0].source.device == unit
    for bad, words in (('kind = "modbus-tcp"\n', "needs host"), ('kind = "file"\npath = "x"\nvalue_unit = "kg"\n',
                                                                  "pressure unit"),
                       ('kind = "serial"\nport = "/dev/x"\npattern = "("\n', "regular expression"),
                       ('kind = "serial"\nport = "/dev/x"\npattern = "P=(.*)"\n', "named group"),
                       ('kind = "file"\npath = "x"\nvalue_column = 2\n', "needs a delimiter"),
                       ('kind = "file"\npath = "x"\ndelimiter = ","\ntime_column = 1\ntime_format = "dd.mm"\n',
                        "strftime"),
                       ('kind = "file"\npath = "x"\ntimezone = "Mars/Olympus"\n', "IANA"),
                       ('kind = "modbus-tcp"\nhost = "h"\nformat = "float32-xyzw"\n', "byte order"),
                       ('kind = "modbus-tcp"\nhost = "h"\ndevice = 256\n', "device"),
                       ('kind = "modbus-rtu"\nport = "/dev/x"\ndevice = 248\n', "1 to 247"),
                       ('kind = "modbus-rtu"\nport = "/dev/x"\nbytesize = 6\n', "bytesize"),
                       ('kind = "carrier-pigeon"\n', "kind")):
        with pytest.raises(ProfileError, match=words):
            parse_profile(demo.replace(anchor, anchor + "\n[supplies.source]\n" + bad), "b.toml")


def test_a_missing_serial_text_port_says_so():
    with pytest.raises(InputError, match="does not exist"):
        SerialSource("/dev/benchwarden-no-such-port", BAR)


def test_a_source_that_never_agrees_with_itself_holds_at_most_a_bounded_number_of_samples():
    from benchwarden.live.sample import MAX_HELD

    f = Plausibility(0.0, 300e5, 1e5, 0.0)   # a 1 bar band, no drift allowed
    out = []
    for i in range(500):   # 0, 2, 4, ... 298 bar, round and round: no sample agrees with a recent one
        out += f(Sample(NOW + dt.timedelta(seconds=i), (i % 150) * 2e5, True))
        assert sum(len(c) for c in f.chains) <= MAX_HELD
    assert out and all(s.status == "implausible" for s in out)
