"""Compiled flash algorithms (numba, nopython), written once over the model interface.

One job per module; each imports model functions only from :mod:`jtcheck.thermo.models.interface`:

- :mod:`~jtcheck.thermo.kernels.constants`: status codes of the flash kernels, temperature window;
- :mod:`~jtcheck.thermo.kernels.linalg`: small dense solves that report failure instead of raising;
- :mod:`~jtcheck.thermo.kernels.rachford_rice`: the Rachford-Rice equation (Leibovici and Neoschil window);
- :mod:`~jtcheck.thermo.kernels.wilson`: Wilson K-values;
- :mod:`~jtcheck.thermo.kernels.stability`: tangent-plane stability test (Michelsen 1982, Part I);
- :mod:`~jtcheck.thermo.kernels.split`: two-phase split at T, P (Michelsen 1982, Part II);
- :mod:`~jtcheck.thermo.kernels.single_phase`: one phase at P and H or S (temperature iteration);
- :mod:`~jtcheck.thermo.kernels.saturation`: saturation temperature of a pure component;
- :mod:`~jtcheck.thermo.kernels.flash_pt`: PT flash;
- :mod:`~jtcheck.thermo.kernels.flash_spec`: PH and PS flashes (Michelsen 1987);
- :mod:`~jtcheck.thermo.kernels.letdown_batch`: many letdowns of one feed in parallel.

The readable entry points that turn status codes into results are :mod:`jtcheck.thermo.flash`,
:mod:`jtcheck.thermo.stability` and :mod:`jtcheck.thermo.rachford_rice`; the methods and equations
are described there.
"""
