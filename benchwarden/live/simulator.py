"""A simulated cylinder served as a Modbus/TCP device, for trying live gauges without hardware.

Register map (holding registers, and the same in input registers; any unit id, or only the one
given): 0–1 the pressure in bar(g) as float32 (big-endian words), 2–3 the gas temperature in °C
as float32. A request for another unit id (with ``unit``) gets no answer, as on a bus; nothing
is printed for a misbehaving client (pymodbus's own log is silenced: no tracebacks, no frames). The cylinder loses gas by the real-gas mass
balance m(t) = m0 − (ṁ_leak + ṁ_draw)·t (CoolProp HEOS: p from ρ = m/V at the set temperature);
``speed`` runs its clock N times faster, so a night's hold test takes a minute.
"""

from __future__ import annotations

import asyncio
import struct
import time
from dataclasses import dataclass, field

from benchwarden.core import gas as g
from benchwarden.errors import InputError, RangeError
from benchwarden.units.constants import ATM_PA, BAR_PA, T0_K

__all__ = ["Cylinder", "serve"]


@dataclass
class Cylinder:
    gas: g.Gas
    volume_m3: float
    pressure_abs_pa: float
    temperature_k: float
    loss_kg_s: float
    speed: float = 1.0
    ambient_pa: float = ATM_PA
    started: float = field(default_factory=time.monotonic)

    def __post_init__(self) -> None:
        import math

        from benchwarden.core.supply import contents

        contents(self.gas, self.volume_m3, self.pressure_abs_pa, self.temperature_k)  # volume and state checked
        if self.pressure_abs_pa <= self.ambient_pa:
            raise InputError("the simulated cylinder's pressure must be above atmospheric")
        self.m0 = g.density(self.gas, self.temperature_k, self.pressure_abs_pa) * self.volume_m3
        if not (math.isfinite(self.loss_kg_s) and 0.0 <= self.loss_kg_s <= self.m0):
            raise RangeError(what="leak + draw", value=self.loss_kg_s, lo=0.0, hi=self.m0, unit="kg/s",
                             hi_name="the whole cylinder per second")
        self.m_floor = g.density(self.gas, self.temperature_k, self.ambient_pa) * self.volume_m3

    def pressure_at(self, elapsed_s: float) -> float:
        """Absolute pressure [Pa] after ``elapsed_s`` of simulated time (never below ambient)."""
        m = max(self.m_floor, self.m0 - self.loss_kg_s * elapsed_s)
        return g.pressure_from_density(self.gas, m / self.volume_m3, self.temperature_k)

    def now_pressure(self) -> float:
        return self.pressure_at((time.monotonic() - self.started) * self.speed)


def _words(value: float) -> list[int]:
    raw = struct.pack(">f", value)
    return [int.from_bytes(raw[0:2], "big"), int.from_bytes(raw[2:4], "big")]


async def serve(cyl: Cylinder, port: int, host: str = "127.0.0.1", duration_s: float | None = None,
                unit: int | None = None) -> None:
    """Serve the cylinder on ``host:port`` until ``duration_s`` passes (or forever), answering
    every unit id, or only ``unit`` (0–255)."""
    import logging

    import pymodbus  # noqa: F401  (the package first: importing pymodbus.server first is circular in 3.16)
    from pymodbus.server import ModbusTcpServer
    from pymodbus.simulator import DataType, SimData, SimDevice

    if not 0 < port < 65536:
        raise InputError(f"port {port} must be between 1 and 65535")
    if unit is not None and not 0 <= unit <= 255:
        raise InputError(f"unit id {unit} must be between 0 and 255")
    log = logging.getLogger("pymodbus")
    log.setLevel(logging.CRITICAL + 1)  # a client's bad request must not print tracebacks or wire dumps
    log.propagate = False

    async def action(function_code: int, start_address: int, address: int, count: int,
                     current: list[int], set_registers: object) -> None:
        regs = _words((cyl.now_pressure() - cyl.ambient_pa) / BAR_PA) + _words(cyl.temperature_k - T0_K)
        for i in range(len(current)):
            if start_address + i < len(regs):
                current[i] = regs[start_address + i]
        return None

    # id 0: every unit id (pymodbus's catch-all device); shared registers: holding = input
    device = SimDevice(0 if unit is None else unit, simdata=[SimData(0, count=4, values=0, datatype=DataType.REGISTERS)],
                       action=action)  # type: ignore[arg-type]
    server = ModbusTcpServer(device, address=(host, port), ignore_missing_devices=True)
    cyl.started = time.monotonic()  # the simulated clock starts with the server
    task = asyncio.create_task(server.serve_forever())
    try:
        if duration_s is None:
            await task
        else:
            await asyncio.sleep(duration_s)
    finally:
        await server.shutdown()
