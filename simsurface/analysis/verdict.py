"""Is an oscillation visible? The rule that turns a predicted amplitude into a verdict.

A harmonic is judged in the measured quantity (resistance in Ω, or conductance in e²/h, whichever the noise
floor is given in) by two numbers:

* signal-to-noise S = A / σ, with A the amplitude expected in one device (rms over the simulated devices)
  and σ the rms noise of one measured trace;
* the number of periods n_p of the harmonic inside the magnet's field range.

Rule (common practice, no source; thresholds chosen so that "visible" means a Fourier peak that stands out
of a single trace by eye):

* visible      — S ≥ 3 and n_p ≥ 3;
* marginal     — S ≥ 1 and n_p ≥ 1, but not visible;
* not visible  — otherwise.
"""

from __future__ import annotations

VISIBLE_SNR = 3.0
VISIBLE_PERIODS = 3.0
MARGINAL_SNR = 1.0
MARGINAL_PERIODS = 1.0
VERDICTS = ("visible", "marginal", "not visible")

RULE_TEXT = (f"visible: amplitude >= {VISIBLE_SNR:g} x noise floor and >= {VISIBLE_PERIODS:g} periods in the "
             f"field range; marginal: amplitude >= {MARGINAL_SNR:g} x noise floor and >= {MARGINAL_PERIODS:g} "
             "period; not visible: otherwise. Amplitude = rms over the simulated devices of the Fourier "
             "amplitude of the measured quantity (one device).")


def verdict(amplitude: float, noise_floor: float, periods: float) -> str:
    """'visible', 'marginal' or 'not visible' for an amplitude, a noise floor (same unit) and a period count."""
    if noise_floor <= 0:
        raise ValueError("noise_floor must be > 0")
    snr = amplitude / noise_floor
    if snr >= VISIBLE_SNR and periods >= VISIBLE_PERIODS:
        return "visible"
    if snr >= MARGINAL_SNR and periods >= MARGINAL_PERIODS:
        return "marginal"
    return "not visible"


def best(verdicts: list[str]) -> str:
    """The most favourable of several verdicts."""
    return min(verdicts, key=VERDICTS.index)
