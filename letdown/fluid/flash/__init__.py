"""Flashes on the equations of state: stability and two-phase P-T flash, the three-phase split with
free water, dew and bubble points, phase envelopes, and the batch engine (P-T, P-h, P-s)."""
