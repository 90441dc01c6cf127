"""Equations of state: the cubic family (Peng-Robinson, SRK) and GERG-2008."""
