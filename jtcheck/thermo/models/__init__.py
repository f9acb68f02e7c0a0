"""Thermodynamic model families, behind one narrow interface that the flash algorithms are written over.

A model family (``models/cubic/``, ``models/gerg2008/``) gives the compiled algorithms of
:mod:`jtcheck.thermo.kernels` (stability, phase split, PT, PH and PS flashes, the letdown batch) six
numba-compiled functions of one parameter tuple ``prm``, which the family builds and the algorithms
pass through untouched.  T [K], P [Pa], mole fractions x [-] of shape (n,); ``phase`` is one of the
codes GIBBS, LIQUID, VAPOUR of :mod:`jtcheck.thermo.models.conventions` (the stable, the densest or the
lightest density root at T, P):

``ln_phi(prm, T, P, x, phase, out) -> Z``
    Fills ``out`` with ln phi_i [-]; returns the compressibility factor [-].  Allocation-free: it is
    the innermost call of the successive-substitution loops (stability, split, pure saturation).
``props(prm, T, P, x, phase) -> (Z, v, h, s, cp, cv, dP_dT_v, dP_dv_T, h_res, s_res)``
    Total molar properties including the ideal-gas part, h [J/mol] zero for the ideal gas at
    298.15 K, s [J/(mol K)] zero for the ideal gas at 298.15 K and 101325 Pa (the reference state is
    shared by every family, so enthalpies of two models are comparable).  The algorithms use h, s, cp
    (indices 2, 3, 4) for PH/PS targets and their temperature derivatives, and h_res (index 8) for
    the pure-component saturation step.  A family may take the ideal-gas part from
    :mod:`jtcheck.thermo.models.idealgas` (Aly and Lee 1981) or from its own formulation.
``fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar) -> Z``
    ln phi with d ln phi_i/d n_j [1/mol] (n, n), d/dT [1/K], d/dP [1/Pa] and the partial molar
    volumes [m^3/mol], for one mole of phase: the Newton steps of the tangent-plane minimisation,
    of the phase split and of the joint (v, T) PH/PS iteration, and dh/dT on the two-phase path.
``pip(prm, T, P, x, phase) -> float``
    Phase identification parameter of Venkatarathnam and Oellrich (2011) [-]; above 1 a single
    phase is labelled liquid, below vapour; also the fallback of the pure-component saturation
    solve when the two roots coincide.
``critical_constants(prm) -> (tcs, pcs, omegas)``
    Critical temperatures [K], pressures [Pa] and acentric factors [-] of the components: Wilson
    K-values (start of stability tests and splits), the heaviest component's trial phase, and the
    start and bracket of a pure component's saturation temperature.
``polar_flags(prm) -> bool array``
    Components that can form a liquid of their own; each gets a near-pure trial phase in the
    stability test.

The algorithms import these (and the conventions) only from :mod:`jtcheck.thermo.models.interface`;
that module is the one place a family is wired in.

How a second family plugs in
----------------------------
The new family writes the six functions above over its own parameter tuple, in its own subpackage,
and makes its mixture object expose that tuple as ``kernel_params``. The interface then chooses the
family at compile time: each interface name becomes a generic function (``numba.extending.overload``
of a Python stub) that looks at the numba type of ``prm`` and returns the matching family's
implementation. numba then compiles every algorithm once per parameter type, and caches each
signature separately, so the flashes are written once and cost nothing extra at run time (a toy of
two families checked this on numba 0.68: overload dispatch on the tuple type, ``cache=True`` hits
for both families in a second process, also inside ``prange``). Two constraints found with numba
0.68: the parameter tuple must be flat (the ``prange`` loop of the letdown batch captures it, and
the parallel lowering rejects tuples nested in tuples), and it should be a plain tuple told apart
from other families' by its element types (for example a leading marker element of a type unique to
the family): a ``NamedTuple`` would be a cleaner key, but numba types a named tuple argument about a
microsecond slower per kernel call, six percent of a single-phase PH flash.

Two families are wired in this way: the generic cubic (``models/cubic/``, tuple led by an ``int64``
alpha code) and GERG-2008 (``models/gerg2008/``, Kunz and Wagner 2012, tuple led by a ``numpy.uint16``
marker); see :mod:`jtcheck.thermo.models.interface`.

Still bound to the cubic, outside the compiled algorithms: :mod:`jtcheck.thermo.envelope` (it calls
:mod:`jtcheck.thermo.models.cubic.properties`, including the cubic's sqrt(a_i) for the critical
point), :mod:`jtcheck.thermo.properties`, the CO2 solids screening, and the annotations of
:mod:`jtcheck.thermo.flash` and :mod:`jtcheck.thermo.stability`, which take a ``CubicMixture`` but
use only its ``kernel_params``, ``n`` and ``pcs``; :class:`jtcheck.thermo.fluid.Fluid` builds the
``CubicMixture``.

numba's on-disk cache does not notice a change in another source file (numba issue #1833): an
algorithm's cached machine code contains the model functions it calls.  After editing a model
kernel, clear the caches (``make clean-kernels``) or touch the algorithm modules.
"""
