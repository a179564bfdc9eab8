"""Live pressure sources: where a supply's pressure comes from when a transducer reads it.

A **source** yields **samples** (a time, a value in SI, good, bad or implausible with the
reason): ``poll(now) -> [Sample]`` and ``close()``; a failure is a bad sample, never an
exception. The parts live in their own modules and are gathered here:

- :mod:`benchwarden.live.registers` — Modbus register formats and byte orders;
- :mod:`benchwarden.live.modbus` — Modbus/TCP and Modbus RTU (sources on one serial port share
  one connection), errors that name their cause;
- :mod:`benchwarden.live.lines` and :mod:`benchwarden.live.textsources` — a serial text line
  and a growing log, read strictly as declared;
- :mod:`benchwarden.live.sample` — the sample, the transducer scaling (``value × scale +
  offset`` in ``value_unit``, gauge unless the unit says absolute), the plausibility filter.
"""

from __future__ import annotations

from benchwarden.live.lines import Dialect, parse_line
from benchwarden.live.modbus import ModbusSource, modbus_rtu, modbus_tcp
from benchwarden.live.registers import FORMATS, decode, encode
from benchwarden.live.sample import (
    Convert,
    Converter,
    Plausibility,
    Sample,
    to_pressure,
    to_temperature,
)
from benchwarden.live.textsources import FileSource, SerialSource
from benchwarden.storage.profile_fields import SourceBase, TemperatureSource

__all__ = ["FORMATS", "decode", "encode", "Sample", "to_pressure", "to_temperature", "converter", "Converter",
           "Plausibility", "Dialect", "parse_line", "FileSource", "SerialSource", "ModbusSource", "modbus_tcp",
           "modbus_rtu", "LiveSource", "make_source", "Convert"]


def converter(src: SourceBase, ambient_pa: float) -> Converter:
    """The conversion a profile's source describes: a pressure source to absolute Pa, a
    temperature source to K (a unit on a line of text replaces ``value_unit``)."""
    quantity = "temperature" if isinstance(src, TemperatureSource) else "pressure"
    return Converter(quantity, src.scale, src.offset, src.value_unit, ambient_pa)


#: Anything :func:`make_source` builds: ``poll(now)`` gives the new samples, ``close()`` lets go.
LiveSource = ModbusSource | SerialSource | FileSource


def make_source(src: SourceBase, ambient_pa: float) -> LiveSource:
    """The live source a profile's ``[supplies.source]`` (or a temperature source) describes."""
    convert = converter(src, ambient_pa)
    if src.kind == "modbus-tcp":
        assert src.host is not None
        return modbus_tcp(src.host, int(src.port or 502), src.device, src.address, src.format, convert,
                          src.input_registers)
    if src.kind == "modbus-rtu":
        return modbus_rtu(str(src.port), src.baud, src.parity, src.device, src.address, src.format, convert,
                          src.input_registers, bytesize=src.bytesize, stopbits=src.stopbits)
    if src.kind == "serial":
        return SerialSource(str(src.port), convert, src.baud, Dialect.of(src), timeout_s=max(2.0, 3 * src.interval),
                            parity=src.parity, bytesize=src.bytesize, stopbits=src.stopbits)
    assert src.path is not None
    return FileSource(src.path, convert, Dialect.of(src))
