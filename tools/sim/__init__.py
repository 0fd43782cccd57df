"""Seeded chart simulator and the invented demo caseload."""

from tools.sim.chart import Profile, Scan, SimChart, SimEntry, Stimulation, TrueCycle
from tools.sim.simulate import simulate_caseload, simulate_patient

__all__ = [
    "Profile",
    "Scan",
    "SimChart",
    "SimEntry",
    "Stimulation",
    "TrueCycle",
    "simulate_caseload",
    "simulate_patient",
]
