"""The generic two-parameter cubic equation of state (van der Waals, Redlich-Kwong, SRK, Peng-Robinson).

- :mod:`~jtcheck.thermo.models.cubic.mixture`: :class:`CubicMixture`, the parameters of a mixture, and
  the tuple ``kernel_params`` the compiled kernels take;
- :mod:`~jtcheck.thermo.models.cubic.properties`: fugacities and phase properties in numpy, vectorised
  over many states (the readable reference);
- :mod:`~jtcheck.thermo.models.cubic.kernels`: the same equations compiled with numba, including the
  functions of the model interface (:mod:`jtcheck.thermo.models.interface`).

The model choices (EOS, alpha function) and their constants are in :mod:`jtcheck.thermo.eos`.
"""
