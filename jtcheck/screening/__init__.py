"""Screening of letdown results against cold hazards: cold metal (MDMT), liquid dropout, hydrates,
CO2 solids, external icing, and the model spread between equations of state.

Engineering layer: imports only :mod:`jtcheck.thermo`, :mod:`jtcheck.letdown` and :mod:`jtcheck.errors`;
takes and returns SI values (Pa, K, J/mol, mole fractions) in frozen dataclasses.
"""
