"""Round tick values for the axes of the server-drawn SVG charts."""
import math


def nice_ticks(low: float, high: float, count: int = 5) -> list[float]:
    """Round tick values (1, 2 or 5 times a power of ten) covering low..high."""
    if high <= low:
        high = low + 1.0
    raw_step = (high - low) / max(count - 1, 1)
    magnitude = 10 ** math.floor(math.log10(raw_step))
    step = next(m * magnitude for m in (1, 2, 5, 10) if m * magnitude >= raw_step)
    first = math.floor(low / step) * step
    ticks = []
    value = first
    while value <= high + step * 1e-9:
        ticks.append(round(value, 10))
        value += step
    if ticks[-1] < high:
        ticks.append(round(ticks[-1] + step, 10))
    return ticks
