"""Modbus sources (pymodbus): a register read over TCP, or over a serial line in RTU framing.

On RS-485 several transducers (or the pressure and temperature of one device) share one serial
port: pymodbus opens a port exclusively, so every ``modbus-rtu`` source on a port shares one
client (:class:`Bus`), polled in turn under the bus's lock, and the port is closed when the last
source on it lets go. A failure is a bad sample naming its cause — no response (a wrong unit id
or wiring), a CRC error, the operating system refusing a serial setting, permission denied, the
port busy — never an exception.
"""

from __future__ import annotations

import datetime as dt
import errno
import logging
import threading
from typing import Any

from benchwarden.errors import InputError
from benchwarden.live.registers import FORMATS, decode, register_count
from benchwarden.live.sample import Convert, Sample

__all__ = ["Bus", "ModbusSource", "modbus_tcp", "modbus_rtu", "serial_open_error"]


class _CrcCounter(logging.Handler):
    """Counts the RTU frames pymodbus dropped for a wrong CRC (it only logs them); every other
    pymodbus message is dropped here, so nothing reaches the terminal."""

    def __init__(self) -> None:
        super().__init__(logging.DEBUG)
        self.count = 0

    def emit(self, record: logging.LogRecord) -> None:
        if "CRC" in record.getMessage():
            self.count += 1


_CRC = _CrcCounter()


def _quiet_pymodbus(rtu: bool = False) -> None:
    """pymodbus logs failed connections and frames on its own: here a failed read is a bad
    sample. On a serial bus its debug messages are counted for CRC errors, never printed."""
    log = logging.getLogger("pymodbus")
    log.propagate = False
    if _CRC not in log.handlers:
        log.addHandler(_CRC)
    if rtu:
        log.setLevel(logging.DEBUG)
    elif log.level != logging.DEBUG:
        log.setLevel(logging.CRITICAL)


def serial_open_error(port: str, exc: BaseException) -> str:
    """Why a serial port would not open, in words that name the cause."""
    code = getattr(exc, "errno", None)
    text = str(exc)
    if code == errno.ENOENT or "No such file" in text or "could not open port" in text and "No such" in text:
        return f"serial port {port} does not exist (unplugged, or another name?)"
    if code == errno.EACCES or "Permission denied" in text:
        return f"permission denied on {port} (is your user in the port's group, e.g. dialout?)"
    if code == errno.EBUSY or "exclusively lock" in text or "busy" in text.lower():
        return f"serial port {port} is busy (another program has it open)"
    if type(exc).__module__ == "termios" or code == errno.EINVAL or "Invalid argument" in text \
            or isinstance(exc, ValueError):
        return f"the operating system refused a setting of {port} (baud, parity, bytesize or stopbits): {text}"
    return f"cannot open the serial port {port}: {text}"


def _tcp_error(where: str) -> str:
    """Why a TCP connection to ``host:port`` fails (pymodbus only logs it)."""
    import socket

    host, _, port = where.rpartition(":")
    try:
        socket.create_connection((host, int(port)), timeout=1.0).close()
    except socket.gaierror:
        return f"unknown host {host!r}"
    except ConnectionRefusedError:
        return "connection refused (no Modbus/TCP server on that port)"
    except TimeoutError:
        return "no answer (the host is down, or a firewall drops the connection)"
    except OSError as exc:
        return exc.strerror or str(exc)
    return "the server closed the connection"


class Bus:
    """One pymodbus client shared by every source on one serial port (or one TCP address)."""

    _open: dict[str, Bus] = {}
    _registry_lock = threading.Lock()

    def __init__(self, key: str, client: Any, settings: dict[str, Any]) -> None:
        self.key, self.client, self.settings = key, client, settings
        self.users = 0
        self.lock = threading.Lock()

    @classmethod
    def get(cls, key: str, settings: dict[str, Any], make: Any) -> Bus:
        """The bus on ``key``, opened with ``make()`` for its first user; a user whose settings
        differ from those it was opened with is refused."""
        with cls._registry_lock:
            bus = cls._open.get(key)
            if bus is None:
                bus = cls._open[key] = Bus(key, make(), settings)
            elif bus.settings != settings:
                raise InputError(f"{key} is already open with {bus.settings}; another source asks for {settings}")
            bus.users += 1
            return bus

    def release(self) -> None:
        with self._registry_lock:
            self.users -= 1
            if self.users <= 0:
                self._open.pop(self.key, None)
                self.client.close()


class ModbusSource:
    """A transducer (or a gateway) on Modbus, read with pymodbus — over TCP, or over a serial
    line in RTU framing (RS-485): ``value`` in holding (or input) registers from ``register``,
    in ``fmt``. A failure is a bad sample with the reason, never an exception."""

    def __init__(self, client: Any, where: str, device: int, register: int, fmt: str, convert: Convert,
                 input_registers: bool = False, bus: Bus | None = None) -> None:
        if fmt not in FORMATS:
            raise InputError(f"register format {fmt!r} is not one of {', '.join(FORMATS)}")
        _quiet_pymodbus(rtu=bus is not None)
        self.client, self.where, self.convert = client, f"{where} device {device} register {register}", convert
        self.port = where
        self.device, self.register, self.fmt, self.input = device, register, fmt, input_registers
        self.bus = bus
        self.lock = bus.lock if bus is not None else threading.Lock()

    def read(self, now: dt.datetime) -> Sample:
        with self.lock:
            return self._read(now)

    def _connect_error(self) -> str:
        if self.bus is None:
            return f"cannot reach {self.where}: {_tcp_error(self.port)}"
        import serial

        try:  # pymodbus only logs why: open the port once ourselves to name the cause
            serial.Serial(self.port, **self.bus.settings, timeout=0, exclusive=True).close()
        except Exception as exc:  # noqa: BLE001 - pyserial raises termios.error, OSError, ValueError, ...
            return f"{self.where}: {serial_open_error(self.port, exc)}"
        return f"cannot open {self.port} for {self.where}"

    def _read(self, now: dt.datetime) -> Sample:
        from pymodbus.exceptions import ModbusException, ModbusIOException

        crc_before = _CRC.count
        try:
            if not self.client.connected and not self.client.connect():
                return Sample(now, None, False, self._connect_error(), reached=False)
            call = self.client.read_input_registers if self.input else self.client.read_holding_registers
            r = call(self.register, count=register_count(self.fmt), device_id=self.device)
        except ModbusIOException:
            if self.bus is None:
                self.client.close()
            if _CRC.count > crc_before:
                return Sample(now, None, False, f"{self.where}: CRC error in the answer (noise on the line, or a "
                                                "wrong baud or parity)", reached=False)
            return Sample(now, None, False, f"{self.where}: no response (wrong unit id, baud, parity or wiring?)",
                          reached=False)
        except (ModbusException, OSError) as exc:
            self.client.close()
            return Sample(now, None, False, f"{self.where}: {exc}", reached=False)
        if r.isError():
            return Sample(now, None, False, f"{self.where}: the device refused the read (exception code "
                                            f"{getattr(r, 'exception_code', '?')}: no such register?)", reached=False)
        try:
            return Sample(now, self.convert(decode(r.registers, self.fmt)), True)
        except InputError as exc:
            return Sample(now, None, False, str(exc))

    def poll(self, now: dt.datetime) -> list[Sample]:
        return [self.read(now)]

    def close(self) -> None:
        if self.bus is not None:
            bus, self.bus = self.bus, None
            bus.release()
        else:
            self.client.close()


def modbus_tcp(host: str, port: int, device: int, register: int, fmt: str, convert: Convert,
               input_registers: bool = False, timeout_s: float = 2.0) -> ModbusSource:
    """A Modbus/TCP source (pymodbus ``ModbusTcpClient``)."""
    import pymodbus  # noqa: F401  (the package first, see benchwarden.live.simulator)
    from pymodbus.client import ModbusTcpClient

    client = ModbusTcpClient(host, port=port, timeout=timeout_s, retries=0)
    return ModbusSource(client, f"{host}:{port}", device, register, fmt, convert, input_registers)


def modbus_rtu(port: str, baud: int, parity: str, device: int, register: int, fmt: str, convert: Convert,
               input_registers: bool = False, timeout_s: float = 1.0, bytesize: int = 8,
               stopbits: int = 1) -> ModbusSource:
    """A Modbus RTU source on a serial line (pymodbus ``ModbusSerialClient``, RTU framing); the
    sources on one port share one client."""
    import pymodbus  # noqa: F401
    from pymodbus import FramerType
    from pymodbus.client import ModbusSerialClient

    settings: dict[str, Any] = {"baudrate": baud, "parity": parity, "bytesize": bytesize, "stopbits": stopbits}

    def make() -> Any:
        return ModbusSerialClient(port, framer=FramerType.RTU, timeout=timeout_s, retries=0, **settings)

    bus = Bus.get(f"serial port {port}", settings, make)
    return ModbusSource(bus.client, port, device, register, fmt, convert, input_registers, bus)
