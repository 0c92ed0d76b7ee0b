"""Loads stage: mass distributions, tip-to-root beam statics, the flight envelope."""
