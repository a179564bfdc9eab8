"""Sources that write lines of text: a growing log file, and a transducer on a serial port.

Each line is read strictly as its dialect declares (:mod:`benchwarden.live.lines`); a line that
does not is a bad sample with the reason. A log file must be a regular file or a FIFO (a device
such as ``/dev/zero`` would grow memory without bound); it is followed across rotation — renamed
away and created anew (the old file is read to its end first), or copied and truncated — and
read from the new start, so no line is lost or read twice. A serial line is read by a thread
that stamps each line when it arrives. Work per poll is bounded: at most :data:`READ_BYTES`
read and :data:`PARSE_BUDGET_S` spent parsing; what is left waits for the next poll.
"""

from __future__ import annotations

import datetime as dt
import os
import stat
import threading
import time
from collections import deque
from collections.abc import Callable
from pathlib import Path
from typing import Any

from benchwarden.errors import InputError
from benchwarden.live.lines import (
    MAX_LINE_BYTES,
    OVERLONG,
    Dialect,
    LineError,
    Splitter,
    parse_line,
    split_columns,
)
from benchwarden.live.sample import Convert, Sample

__all__ = ["READ_BYTES", "PARSE_BUDGET_S", "MAX_WAITING_LINES", "LineReader", "FileSource", "SerialSource"]

#: A poll reads at most this many bytes of a log.
READ_BYTES = 1 << 20
#: A poll spends at most this long parsing lines [s]; the rest wait for the next poll.
PARSE_BUDGET_S = 0.5
#: Lines waiting to be parsed are capped (a serial line that floods): the oldest are dropped.
MAX_WAITING_LINES = 10_000


class LineReader:
    """Turns lines into samples as a source's dialect declares (header lines skipped, the last
    one naming the columns); a unit on a line is converted by ``convert.in_unit`` when the
    source has it."""

    def __init__(self, convert: Convert, dialect: Dialect) -> None:
        self.convert, self.dialect = convert, dialect
        self.seen = 0
        self.header: list[str] | None = None
        self.stamped: dt.datetime | None = None

    def _stamp(self, at: dt.datetime) -> dt.datetime:
        """A read time for a line without its own: lines read together get successive
        microseconds, so that each is its own sample."""
        if self.stamped is not None and at <= self.stamped:
            at = self.stamped + dt.timedelta(microseconds=1)
        self.stamped = at
        return at

    def restart(self) -> None:
        """A new file: its header lines come again."""
        self.seen = 0
        self.header = None

    def sample(self, raw: bytes, at: dt.datetime) -> Sample | None:
        """The sample of one line (None for a header, blank or ``#`` comment line)."""
        self.seen += 1
        if raw == OVERLONG:
            return Sample(self._stamp(at), None, False, f"line longer than {MAX_LINE_BYTES} bytes")
        text = raw.decode("utf-8", errors="replace")
        if self.seen <= self.dialect.header_lines:
            if self.dialect.delimiter is not None:
                self.header = split_columns(text.strip(), self.dialect.delimiter)
            return None
        if not text.strip() or text.lstrip().startswith("#"):
            return None
        try:
            got = parse_line(text, self.dialect, self.header)
            if got.unit is None:
                value = self.convert(got.value)
            elif hasattr(self.convert, "in_unit"):
                value = self.convert.in_unit(got.value, got.unit)
            else:
                raise LineError(f"the line has a unit ({got.unit!r}) but this source takes plain numbers")
            return Sample(got.at or self._stamp(at), value, True)
        except InputError as exc:
            return Sample(self._stamp(at), None, False, str(exc))


class _Waiting:
    """Lines read but not parsed yet, parsed within a time budget per poll."""

    def __init__(self, reader: LineReader) -> None:
        self.reader = reader
        self.lines: deque[tuple[dt.datetime, bytes]] = deque()
        self.dropped = 0

    def add(self, at: dt.datetime, lines: list[bytes]) -> None:
        for ln in lines:
            if len(self.lines) >= MAX_WAITING_LINES:
                self.lines.popleft()
                self.dropped += 1
            self.lines.append((at, ln))

    def parse(self, now: dt.datetime, most: int | None = None) -> list[Sample]:
        """Samples of the waiting lines, within the time budget (at most ``most``)."""
        out: list[Sample] = []
        if self.dropped:
            out.append(Sample(now, None, False, f"{self.dropped} line(s) dropped: they came faster than read"))
            self.dropped = 0
        end = time.monotonic() + PARSE_BUDGET_S
        while self.lines and time.monotonic() < end and (most is None or len(out) < most):
            at, raw = self.lines.popleft()
            s = self.reader.sample(raw, at)
            if s is not None:
                out.append(s)
        return out


class FileSource:
    """A CSV or text log that grows: each new complete line is a sample; its time is the line's
    own time stamp where the dialect declares one, else the time it was read."""

    def __init__(self, path: str | Path, convert: Convert, dialect: Dialect | None = None) -> None:
        self.path = Path(path).expanduser()
        self.where = str(self.path)
        self.reader = LineReader(convert, dialect or Dialect())
        self.waiting = _Waiting(self.reader)
        self.splitter = Splitter()
        self.fd: int | None = None
        self.ident: tuple[int, int] | None = None
        self.fifo = False
        self.pos = 0
        self.head = b""

    def _open(self) -> str | None:
        """Open the log (a reason when it cannot be read)."""
        try:
            st = os.stat(self.path)
        except OSError as exc:
            return f"cannot read {self.path}: {exc.strerror or exc}"
        if not (stat.S_ISREG(st.st_mode) or stat.S_ISFIFO(st.st_mode)):
            kind = ("a directory" if stat.S_ISDIR(st.st_mode) else "a character device" if stat.S_ISCHR(st.st_mode)
                    else "a block device" if stat.S_ISBLK(st.st_mode) else "a socket or other special file")
            return f"{self.path} is {kind}, not a regular file or FIFO: a log must be one of those"
        try:
            fd = os.open(self.path, os.O_RDONLY | os.O_NONBLOCK)
        except OSError as exc:
            return f"cannot read {self.path}: {exc.strerror or exc}"
        fst = os.fstat(fd)
        if not (stat.S_ISREG(fst.st_mode) or stat.S_ISFIFO(fst.st_mode)):  # swapped between stat and open
            os.close(fd)
            return f"{self.path} is not a regular file or FIFO"
        self.fd, self.ident, self.fifo = fd, (fst.st_dev, fst.st_ino), stat.S_ISFIFO(fst.st_mode)
        self.pos, self.head = 0, b""
        self.splitter = Splitter()
        self.reader.restart()
        return None

    def _read(self, limit: int) -> bytes:
        assert self.fd is not None
        try:
            data = os.read(self.fd, limit) if self.fifo else os.pread(self.fd, limit, self.pos)
        except BlockingIOError:
            return b""
        if not self.fifo:
            if self.pos < 64:
                self.head = (self.head + data)[:64]
            self.pos += len(data)
        return data

    def _replaced(self) -> bool:
        """Whether the path now names another file (rotated by rename and create)."""
        try:
            st = os.stat(self.path)
        except OSError:
            return False  # gone for now: keep reading the open file
        return (st.st_dev, st.st_ino) != self.ident

    def _truncated(self) -> bool:
        """Whether the open file was cut short or rewritten (copy and truncate)."""
        assert self.fd is not None
        if os.fstat(self.fd).st_size < self.pos:
            return True
        return bool(self.head) and os.pread(self.fd, len(self.head), 0) != self.head

    def poll(self, now: dt.datetime) -> list[Sample]:
        if self.fd is None:
            why = self._open()
            if why is not None:
                return [Sample(now, None, False, why, reached=False)]
        if not self.fifo and self._truncated():
            self.pos, self.head = 0, b""
            self.splitter = Splitter()
            self.reader.restart()
        if not self.waiting.lines:
            data = self._read(READ_BYTES)
            self.waiting.add(now, self.splitter.feed(data))
            if not self.fifo and len(data) < READ_BYTES and self._replaced():
                # rotated: the old file is read to its end (above), then the new one from its start
                self.waiting.add(now, self.splitter.flush())
                self.close()
                if self._open() is None:
                    self.waiting.add(now, self.splitter.feed(self._read(READ_BYTES)))
        return self.waiting.parse(now)

    def close(self) -> None:
        if self.fd is not None:
            os.close(self.fd)
            self.fd = None


class SerialSource:
    """A transducer that prints a line of text per reading on a serial port (pyserial); a thread
    reads the port and stamps each line when it arrives."""

    def __init__(self, port: str, convert: Convert, baud: int = 9600, dialect: Dialect | None = None,
                 timeout_s: float = 1.0, parity: str = "N", bytesize: int = 8, stopbits: int = 1,
                 clock: Callable[[], dt.datetime] = lambda: dt.datetime.now().astimezone()) -> None:
        import serial  # pyserial

        from benchwarden.live.modbus import serial_open_error

        self.where, self.clock, self.timeout_s = port, clock, timeout_s
        self.reader = LineReader(convert, dialect or Dialect())
        self.waiting = _Waiting(self.reader)
        self.lock = threading.Lock()
        self.failed = ""
        self.last_line = time.monotonic()
        self.quiet_told = False
        try:
            self.port: Any = serial.Serial(port, baudrate=baud, timeout=0.2, parity=parity, bytesize=bytesize,
                                           stopbits=stopbits, exclusive=True)  # one port, one connection
        except Exception as exc:  # noqa: BLE001 - pyserial raises termios.error, OSError, ValueError, ...
            raise InputError(serial_open_error(port, exc)) from None
        self.stop = threading.Event()
        self.thread = threading.Thread(target=self._run, name=f"serial {port}", daemon=True)
        self.thread.start()

    def _run(self) -> None:
        splitter = Splitter()
        while not self.stop.is_set():
            try:
                data = self.port.read(max(1, min(self.port.in_waiting, 4096)))
            except Exception as exc:  # noqa: BLE001 - pyserial raises several kinds; the reason is kept
                if not self.stop.is_set():
                    self.failed = f"{self.where}: {exc}"
                return
            if data:
                lines = splitter.feed(data)
                if lines:
                    at = self.clock()
                    with self.lock:
                        self.waiting.add(at, lines)
                        self.last_line = time.monotonic()

    def poll(self, now: dt.datetime) -> list[Sample]:
        """The lines that arrived since the last poll, each stamped when it arrived; no line for
        longer than the timeout is one bad sample."""
        with self.lock:
            out = self.waiting.parse(now)
            quiet = time.monotonic() - self.last_line
        if self.failed and not out:
            why = self.failed
            self.close()
            raise InputError(why)
        if out:
            self.quiet_told = False
        elif quiet > self.timeout_s and not self.quiet_told:
            self.quiet_told = True
            out.append(Sample(now, None, False, f"no line from {self.where} for {quiet:.0f} s", reached=False))
        return out

    def read(self, now: dt.datetime) -> Sample:
        """The next sample, waiting up to the timeout (for one-off reads)."""
        end = time.monotonic() + self.timeout_s
        while True:
            with self.lock:
                got = self.waiting.parse(now, most=1)
            if got:
                return got[0]
            if self.failed or time.monotonic() >= end:
                return Sample(now, None, False, self.failed or "no line within the timeout")
            time.sleep(0.01)

    def close(self) -> None:
        self.stop.set()
        if self.thread.is_alive() and self.thread is not threading.current_thread():
            self.thread.join(timeout=2.0)
        try:
            self.port.close()
        except Exception:  # noqa: BLE001 - closing a dead port
            pass
