"""s-domain assembly and exact solve, checked against circuit and mechanics formulas.

Each check names where its expected value comes from.  Netlists are built
directly from the model (there is no parser in these tests).
"""

from __future__ import annotations

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from lumped import model as m
from lumped.constants import STANDARD_GRAVITY, s
from lumped.errors import SolveError, ValidationError
from lumped.network import assemble

Q = sympy.Rational
POS = {"positive": True}


# --------------------------------------------------------------------------- helpers


el = m.make_element  # exact elements from plain ints


def _ex(x: sympy.Expr | int) -> sympy.Expr:
    return sympy.Integer(x) if isinstance(x, int) else x


def step(amplitude: sympy.Expr | int = 1, delay: sympy.Expr | int = 0) -> m.Waveform:
    return m.Waveform((m.WaveformTerm(m.Shape.STEP, _ex(amplitude), _ex(delay)),))


def term(shape: m.Shape, amplitude: sympy.Expr | int, **kw: sympy.Expr) -> m.Waveform:
    return m.Waveform((m.WaveformTerm(shape, sympy.Integer(amplitude), **kw),))


def net(*elements: m.Element, couplings: tuple[m.Coupling, ...] = (), **kw: object) -> m.Netlist:
    return m.Netlist("test", "", elements=elements, couplings=couplings, **kw)  # type: ignore[arg-type]


def qty(word: str, target: str, prep: str = "at") -> m.Quantity:
    return m.Quantity(m.QuantityKind.from_word(word), target, prep)


def same(a: sympy.Expr, b: sympy.Expr) -> bool:
    return sympy.simplify(sympy.expand(a - b)) == 0


# --------------------------------------------------------------------------- electrical


def test_rc_low_pass_step_numeric() -> None:
    # Voltage divider with Z_C = 1/(sC) (common practice): V_out = V/(s (1 + sRC)).
    r, c = Q(1000), Q(1, 10**6)
    sol = assemble(
        net(
            el("V1", "voltage source", "in", "ground", waveform=step(5)),
            el("R1", "resistor", "in", "out", r),
            el("C1", "capacitor", "out", "ground", c),
        )
    )
    resp = sol.response(qty("voltage", "out"))
    assert same(resp.transform, 5 / (s * (1 + s * r * c)))
    assert resp.unit == "V"
    assert resp.zero_input == 0
    assert same(resp.zero_state, resp.transform)


def test_rc_low_pass_with_free_resistance_stays_symbolic() -> None:
    # Divider formula (common practice): H = 1/(1 + sRC) with R a free parameter.
    r = sympy.Symbol("R", **POS)
    c = Q(1, 10**6)
    sol = assemble(
        net(
            el("V1", "voltage source", "in", "ground"),
            el("R1", "resistor", "in", "out", r),
            el("C1", "capacitor", "out", "ground", c),
        )
    )
    tf = sol.transfer_function("V1", qty("voltage", "out"))
    assert same(tf.expr, 1 / (c * r * s + 1))
    assert tf.numerator.as_expr().free_symbols <= {r}
    assert tf.denominator.degree() == 1
    assert tf.stability == "stable"
    assert tf.dc_gain == 1


def test_all_symbolic_rc_transform_is_a_plain_ratio() -> None:
    r, c, v = sympy.symbols("R C V", positive=True)
    sol = assemble(
        net(
            el("V1", "voltage source", "in", "ground", waveform=step(v)),
            el("R1", "resistor", "in", "out", r),
            el("C1", "capacitor", "out", "ground", c),
        )
    )
    resp = sol.response(qty("voltage", "out"))
    # Divider formula (common practice).
    assert same(resp.transform, v / (s * (c * r * s + 1)))
    num, den = sympy.fraction(sympy.together(resp.transform))
    assert sympy.Poly(num, s).degree() == 0 and sympy.Poly(den, s).degree() == 2


def test_resistive_divider() -> None:
    # Voltage divider (common practice): V R2/(R1 + R2).
    sol = assemble(
        net(
            el("V1", "voltage source", "a", "ground", waveform=step(12)),
            el("R1", "resistor", "a", "b", 3000),
            el("R2", "resistor", "b", "ground", 1000),
        )
    )
    assert same(sol.response(qty("voltage", "b")).transform, Q(12 * 1000, 4000) / s)
    # Ohm's law: the source current, from + through the source to -, is -V/(R1+R2).
    assert same(sol.response(qty("current", "V1", "in")).transform, -Q(12, 4000) / s)


def test_series_rlc_current() -> None:
    # Series impedance R + sL + 1/(sC) (common practice): I = V / (s Z).
    r, ind, c = Q(10), Q(1, 1000), Q(1, 10**5)
    sol = assemble(
        net(
            el("V1", "voltage source", "a", "ground", waveform=step(1)),
            el("R1", "resistor", "a", "b", r),
            el("L1", "inductor", "b", "c", ind),
            el("C1", "capacitor", "c", "ground", c),
        )
    )
    z = r + s * ind + 1 / (s * c)
    assert same(sol.response(qty("current", "L1", "in")).transform, 1 / (s * z))
    # Capacitor current equals the loop current; resistor current too (admittance form).
    assert same(sol.response(qty("current", "C1", "in")).transform, 1 / (s * z))
    assert same(sol.response(qty("current", "R1", "through")).transform, 1 / (s * z))
    assert same(sol.response(qty("voltage", "L1", "across")).transform, s * ind / (s * z))


def test_parallel_rc_driven_by_current() -> None:
    # Parallel impedance R/(1 + sRC) (common practice); current source at node pushes into it.
    r, c = Q(50), Q(1, 100)
    sol = assemble(
        net(
            el("I1", "current source", "ground", "n", waveform=step(2)),
            el("R1", "resistor", "n", "ground", r),
            el("C1", "capacitor", "n", "ground", c),
        )
    )
    assert same(sol.response(qty("voltage", "n")).transform, 2 * r / (s * (1 + s * r * c)))
    assert same(sol.response(qty("current", "I1", "in")).transform, 2 / s)


def test_transformer_reflects_load_by_ratio_squared() -> None:
    # Ideal transformer (common practice): across_in = n across_out, so R_in = n^2 R_load.
    n, rl = Q(3), Q(8)
    sol = assemble(
        net(
            el("I1", "current source", "ground", "p", waveform=step(1)),
            el("RL", "resistor", "q", "ground", rl),
            couplings=(
                m.Coupling(
                    "T1",
                    m.CouplingKind.TRANSFORMER,
                    m.Port("p", "ground"),
                    m.Port("q", "ground"),
                    n,
                ),
            ),
        )
    )
    assert same(sol.response(qty("voltage", "p")).transform, n**2 * rl / s)
    assert same(sol.response(qty("voltage", "q")).transform, n * rl / s)


def test_initial_conditions_and_contributions() -> None:
    # RC discharge from v0 (common practice): V = v0/(s + 1/RC); plus a step input.
    r, c = Q(2), Q(1, 4)
    sol = assemble(
        net(
            el("V1", "voltage source", "in", "ground", waveform=step(3)),
            el("R1", "resistor", "in", "out", r),
            el("C1", "capacitor", "out", "ground", c, initial=7),
        )
    )
    resp = sol.response(qty("voltage", "out"))
    tau = r * c
    assert same(resp.zero_input, 7 / (s + 1 / tau))
    assert same(resp.zero_state, 3 / (s * (1 + s * tau)))
    assert same(resp.transform, resp.zero_state + resp.zero_input)
    total = sum(ci.weight * ci.transform for ci in resp.contributions)
    assert same(total, resp.transform)
    origins = sorted(ci.origin for ci in resp.contributions)
    assert origins == ["initial", "source"]
    # Capacitor current I = sC V - C v0 includes the companion source.
    cur = sol.response(qty("current", "C1", "in"))
    assert same(cur.transform, c * (s * resp.transform - 7))


def test_inductor_initial_current_decays() -> None:
    # RL decay (common practice): I = i0/(s + R/L).
    sol = assemble(
        net(
            el("L1", "inductor", "a", "ground", Q(1, 2), initial=4),
            el("R1", "resistor", "a", "ground", 3),
        )
    )
    assert same(sol.response(qty("current", "L1", "in")).transform, 4 / (s + 6))
    # Node voltage -R i: the inductor's current flows a -> ground, so through R from ground to a.
    assert same(sol.response(qty("voltage", "a")).transform, -3 * 4 / (s + 6))


def test_delayed_source_gives_shifted_terms() -> None:
    sol = assemble(
        net(
            el("V1", "voltage source", "in", "ground", waveform=step(2, 3)),
            el("R1", "resistor", "in", "out", 1),
            el("C1", "capacitor", "out", "ground", 1),
        )
    )
    resp = sol.response(qty("voltage", "out"))
    # Time shift theorem (table of transforms, from memory): f(t - T) u(t - T) -> e^{-sT} F(s).
    assert same(resp.transform, 2 * sympy.exp(-3 * s) / (s * (s + 1)))
    terms = resp.terms
    assert len(terms) == 1 and terms[0][1] == 3 and same(terms[0][0], 2 / (s * (s + 1)))


def test_sine_source_weights_and_pi() -> None:
    phase = sympy.pi / 4
    wave = m.Waveform(
        (m.WaveformTerm(m.Shape.SINE, sympy.Integer(1), frequency=Q(1), phase=phase),)
    )
    sol = assemble(
        net(
            el("V1", "voltage source", "in", "ground", waveform=wave),
            el("R1", "resistor", "in", "out", 1),
            el("C1", "capacitor", "out", "ground", 1),
        )
    )
    resp = sol.response(qty("voltage", "out"))
    w = 2 * sympy.pi
    expected = (w * sympy.cos(phase) + s * sympy.sin(phase)) / (s**2 + w**2) / (s + 1)
    # pi in the waveform is taken as a 40-digit rational (the one the solve uses), so
    # the transform agrees with the exact one to far better than 1e-30 relative.
    for point in (sympy.Rational(1, 3), sympy.Integer(2), sympy.Integer(17) + sympy.I):
        got, want = (sympy.N(f.subs(s, point), 60) for f in (resp.transform, expected))
        assert abs(got - want) <= sympy.Float("1e-35", 60) * abs(want)
    assert not resp.transform.has(sympy.pi)
    for ci in resp.contributions:
        assert ci.weight == sympy.sqrt(2) / 2
        assert sympy.sqrt(2) not in ci.transform.atoms(sympy.Pow)
    assert same(sum(ci.weight * ci.transform for ci in resp.contributions), resp.transform)


def test_fast_and_symbolic_solvers_agree() -> None:
    # The numeric path (multimodular) and the symbolic path (DomainMatrix.solve_den)
    # are independent; substituting values into the symbolic result must give the other.
    r1, l1, c1 = sympy.symbols("r1 l1 c1", positive=True)
    values = {r1: Q(3, 7), l1: Q(2, 5), c1: Q(11, 13)}

    def ladder(rv: sympy.Expr, lv: sympy.Expr, cv: sympy.Expr) -> m.Netlist:
        return net(
            el("V1", "voltage source", "n0", "ground", waveform=step(1)),
            el("Ra", "resistor", "n0", "a", rv),
            el("La", "inductor", "a", "b", lv, initial=Q(1, 3)),
            el("Ca", "capacitor", "b", "ground", cv, initial=2),
            el("Rb", "resistor", "b", "c", 2 * rv),
            el("Lb", "inductor", "c", "d", lv / 3),
            el("Cb", "capacitor", "d", "ground", cv + 1),
        )

    numeric = assemble(ladder(*values.values()))
    symbolic = assemble(ladder(r1, l1, c1))
    for quantity in (qty("voltage", "d"), qty("current", "La", "in"), qty("current", "V1", "in")):
        a = numeric.response(quantity).transform
        b = symbolic.response(quantity).transform.subs(values)
        assert same(a, b), quantity.label


# --------------------------------------------------------------------------- natural frequency


def test_series_rlc_natural_frequency_and_damping() -> None:
    # Series RLC (from memory): wn = 1/sqrt(LC), zeta = (R/2) sqrt(C/L), Q = 1/(2 zeta).
    r, ind, c = sympy.symbols("R L C", positive=True)
    sol = assemble(
        net(
            el("V1", "voltage source", "a", "ground"),
            el("R1", "resistor", "a", "b", r),
            el("L1", "inductor", "b", "c", ind),
            el("C1", "capacitor", "c", "ground", c),
        )
    )
    tf = sol.transfer_function("V1", qty("voltage", "C1", "across"))
    assert len(tf.second_order_factors) == 1
    f = tf.second_order_factors[0]
    assert same(f.natural_frequency, 1 / sympy.sqrt(ind * c))
    assert same(f.damping_ratio, r / 2 * sympy.sqrt(c / ind))
    assert same(f.quality_factor, sympy.sqrt(ind / c) / r)
    assert tf.stability == "stable"


def test_mass_spring_damper_natural_frequency_and_damping() -> None:
    # Mass-spring-damper (from memory): wn = sqrt(k/m), zeta = c / (2 sqrt(k m)).
    k, mass, c = sympy.symbols("k m c", positive=True)
    sol = assemble(
        net(
            el("F1", "force source", "frame", "body"),
            el("M", "mass", "body", "frame", mass),
            el("K", "spring", "body", "frame", k),
            el("D", "damper", "body", "frame", c),
        )
    )
    tf = sol.transfer_function("F1", qty("displacement", "body"))
    # Compliance 1/(m s^2 + c s + k) (from memory).
    assert same(tf.expr, 1 / (mass * s**2 + c * s + k))
    f = tf.second_order_factors[0]
    assert same(f.natural_frequency, sympy.sqrt(k / mass))
    assert same(f.damping_ratio, c / (2 * sympy.sqrt(k * mass)))


def test_numeric_second_order_figures_and_poles() -> None:
    # m = 1, c = 2, k = 101: poles -1 +- 10j, wn = sqrt(101), zeta = 1/sqrt(101) (hand algebra).
    sol = assemble(
        net(
            el("F1", "force source", "frame", "body"),
            el("M", "mass", "body", "frame", 1),
            el("K", "spring", "body", "frame", 101),
            el("D", "damper", "body", "frame", 2),
        )
    )
    tf = sol.transfer_function("F1", qty("velocity", "body"))
    assert sorted(tf.poles, key=lambda p: sympy.im(p)) == [-1 - 10 * sympy.I, -1 + 10 * sympy.I]
    assert tf.zeros == (0,)
    assert tf.dc_gain == 0
    f = tf.second_order_factors[0]
    assert f.natural_frequency == sympy.sqrt(101)
    assert same(f.damping_ratio, 1 / sympy.sqrt(101))
    assert tf.stability == "stable" and tf.offending_poles == ()


def test_stability_of_undamped_and_integrating_systems() -> None:
    lc = net(
        el("I1", "current source", "ground", "a"),
        el("L1", "inductor", "a", "ground", 1),
        el("C1", "capacitor", "a", "ground", 1),
    )
    tf = assemble(lc).transfer_function("I1", qty("voltage", "a"))
    assert tf.stability == "marginal"
    assert set(tf.offending_poles) == {sympy.I, -sympy.I}
    free_mass = net(el("F1", "force source", "frame", "b"), el("M", "mass", "b", "frame", 2))
    tf = assemble(free_mass).transfer_function("F1", qty("displacement", "b"))
    # 1/(2 s^2): a double pole at 0 grows like t.
    assert tf.stability == "unstable"
    assert tf.dc_gain is None and "pole" in tf.dc_gain_note


def test_high_order_numeric_poles_are_certified_floats() -> None:
    # A 3-section RC ladder: all poles real and negative (passive RC network, common practice).
    parts = [el("V1", "voltage source", "n0", "ground")]
    for k in range(3):
        parts.append(el(f"R{k}", "resistor", f"n{k}", f"n{k + 1}", 1))
        parts.append(el(f"C{k}", "capacitor", f"n{k + 1}", "ground", 1))
    tf = assemble(net(*parts)).transfer_function("V1", qty("voltage", "n3"))
    assert tf.denominator.degree() == 3
    assert len(tf.poles) == 3
    for p in tf.poles:
        assert abs(complex(p).imag) < 1e-12 and complex(p).real < 0
    # Product of poles = -(constant term) for a monic cubic (Vieta).
    prod = complex(sympy.Mul(*tf.poles))
    assert prod.real == pytest.approx(-float(tf.denominator.all_coeffs()[-1]), rel=1e-12)
    assert tf.stability == "stable"


# --------------------------------------------------------------------------- mechanical


def test_mass_initial_velocity_displacement_and_acceleration() -> None:
    # Free mass coasting at v0 (Newton's first law): x = v0 t, a = 0.
    sol = assemble(net(el("M", "mass", "b", "frame", 3, initial=5)))
    assert same(sol.response(qty("velocity", "b")).transform, 5 / s)
    assert same(sol.response(qty("displacement", "b")).transform, 5 / s**2)
    assert sol.response(qty("acceleration", "b")).transform == 0
    assert sol.response(qty("displacement", "b")).unit == "m"


def test_acceleration_under_force_step() -> None:
    # Newton's second law: a = F/m for a force step on a free mass: A(s) = F/(m s).
    sol = assemble(
        net(
            el("F1", "force source", "frame", "b", waveform=step(6)),
            el("M", "mass", "b", "frame", 2),
        )
    )
    assert same(sol.response(qty("acceleration", "b")).transform, 3 / s)
    assert sol.response(qty("acceleration", "b")).unit == "m/s^2"


def test_spring_force_includes_preload() -> None:
    # Spring between a held point and the frame: its force stays at the preload.
    sol = assemble(
        net(
            el("Vs", "velocity source", "a", "frame", waveform=step(0)),
            el("K", "spring", "a", "frame", 100, initial=-20),
        )
    )
    assert same(sol.response(qty("force", "K", "in")).transform, -20 / s)


def test_mass_on_spring_from_equilibrium_stays_at_rest() -> None:
    # Static equilibrium (common practice): a mass hung on a spring, released at
    # equilibrium, does not move; the spring carries the weight m g.
    mass, k, g = Q(2), Q(500), Q(981, 100)
    base = (el("M", "mass", "body", "frame", mass), el("K", "spring", "body", "frame", k))
    sol = assemble(net(*base, gravity=m.Gravity(g, m.GravityStart.EQUILIBRIUM)))
    assert sol.response(qty("displacement", "body")).transform == 0
    assert sol.response(qty("velocity", "body")).transform == 0
    # Spring through from body to frame: -m g (it pushes the body up).
    assert same(sol.response(qty("force", "K", "in")).transform, -mass * g / s)
    # Unloaded start: the body sags to -m g / k on average, oscillating (hand solution).
    loose = assemble(net(*base, gravity=m.Gravity(g, m.GravityStart.UNLOADED)))
    x = loose.response(qty("displacement", "body")).transform
    assert same(x, -g / (s * (s**2 + k / mass)))
    assert [c.origin for c in loose.response(qty("displacement", "body")).contributions] == [
        "gravity"
    ]


def test_equilibrium_with_free_parameters() -> None:
    mass, k, c, g = sympy.symbols("m k c g", positive=True)
    sol = assemble(
        net(
            el("M", "mass", "body", "frame", mass),
            el("K", "spring", "body", "frame", k),
            el("D", "damper", "body", "frame", c),
            el("F1", "force source", "frame", "body", waveform=step(1)),
            gravity=m.Gravity(g, m.GravityStart.EQUILIBRIUM),
        )
    )
    # From equilibrium only the 1 N step remains: X = 1/(s (m s^2 + c s + k)).
    assert same(
        sol.response(qty("displacement", "body")).transform, 1 / (s * (mass * s**2 + c * s + k))
    )


def test_equilibrium_needs_static_support() -> None:
    with pytest.raises(SolveError, match="Crate"):
        assemble(
            net(
                el("Crate", "mass", "body", "frame", 5),
                el("D", "damper", "body", "frame", 10),
                gravity=m.Gravity(STANDARD_GRAVITY, m.GravityStart.EQUILIBRIUM),
            )
        )


def test_gear_reflects_inertia() -> None:
    # Gear with across_in = n across_out: the input sees J / n^2 (common practice;
    # with the ratio defined the other way round, output over input, this reads J n^2).
    n, inertia = Q(4), Q(3, 2)
    sol = assemble(
        net(
            el("T1", "torque source", "frame", "in", waveform=step(2)),
            el("J", "inertia", "out", "frame", inertia),
            couplings=(
                m.Coupling(
                    "G", m.CouplingKind.GEAR, m.Port("in", "frame"), m.Port("out", "frame"), n
                ),
            ),
        )
    )
    assert same(sol.response(qty("angular velocity", "in")).transform, 2 / (s**2 * inertia / n**2))
    assert same(sol.response(qty("angular velocity", "out")).transform, 2 / (s**2 * inertia / n))
    assert sol.response(qty("angle", "out")).unit == "rad"


def test_motor_driving_inertia_from_voltage_step() -> None:
    # Hand derivation: V = R i + k w, J dw/dt = k i  =>  W(s) = k V / (s (R J s + k^2)).
    r, kt, inertia, v = sympy.symbols("R k J V", positive=True)
    sol = assemble(
        net(
            el("V1", "voltage source", "a", "ground", waveform=step(v)),
            el("Rw", "resistor", "a", "b", r),
            el("J", "inertia", "shaft", "frame", inertia),
            couplings=(
                m.Coupling(
                    "M1", m.CouplingKind.MOTOR, m.Port("b", "ground"), m.Port("shaft", "frame"), kt
                ),
            ),
        )
    )
    w = sol.response(qty("angular velocity", "shaft")).transform
    assert same(w, kt * v / (s * (r * inertia * s + kt**2)))
    # Motor current i = (V - k w)/R flows into the coupling's input port.
    i = sol.response(qty("current", "M1", "in")).transform
    assert same(i, (v / s - kt * w) / r)
    # Through of the output port from shaft to frame: -k i (torque delivered into the shaft is k i).
    tq = sol.response(qty("torque", "M1", "in")).transform
    assert same(tq, -kt * i)


def test_drop_keeps_sqrt_in_weight() -> None:
    # Drop from h: contact velocity -sqrt(2 g h) (energy conservation, from memory).
    h = Q(1, 3)
    mass, k = Q(10), Q(4000)
    sol = assemble(
        net(
            el("M", "mass", "body", "frame", mass),
            el("K", "spring", "body", "frame", k),
            drops=(m.Drop("M", h),),
        )
    )
    resp = sol.response(qty("velocity", "body"))
    v0 = -sympy.sqrt(2 * STANDARD_GRAVITY * h)
    drop = [c for c in resp.contributions if c.origin == "drop"]
    assert len(drop) == 1 and same(drop[0].weight, v0)
    # The weight carries the square root; the transform has rational coefficients.
    assert all(p.exp.is_integer for p in drop[0].transform.atoms(sympy.Pow))
    # Standard gravity is implied: velocity = v0 s/(s^2 + w^2) - g/(s^2 + w^2) (hand solution).
    w2 = k / mass
    assert same(resp.transform, (v0 * s - STANDARD_GRAVITY) / (s**2 + w2))


# --------------------------------------------------------------------------- errors and notes


def test_node_fed_only_by_current_source_is_an_error() -> None:
    with pytest.raises(SolveError, match="I1"):
        assemble(
            net(
                el("I1", "current source", "ground", "x", waveform=step(1)),
                el("R1", "resistor", "y", "ground", 1),
            )
        )


def test_current_source_into_floating_pair() -> None:
    with pytest.raises(SolveError, match=r"I1") as info:
        assemble(
            net(
                el("I1", "current source", "ground", "x", waveform=step(1)),
                el("C1", "capacitor", "x", "y", 1),
                el("R1", "resistor", "z", "ground", 1),
                el("I2", "current source", "y", "z", waveform=step(1)),
            )
        )
    assert "x" in str(info.value) and "y" in str(info.value)


def test_loop_of_voltage_sources_is_an_error() -> None:
    with pytest.raises(SolveError, match=r"V1.*V2|V2.*V1"):
        assemble(
            net(
                el("V1", "voltage source", "a", "ground", waveform=step(1)),
                el("V2", "voltage source", "a", "ground", waveform=step(2)),
                el("R1", "resistor", "a", "ground", 1),
            )
        )


def test_generic_singularity_names_elements() -> None:
    # A current source into a transformer whose secondary is open: the secondary
    # cannot carry n i, so det A == 0, though every node has a path to ground.
    with pytest.raises(SolveError, match="T1"):
        assemble(
            net(
                el("I1", "current source", "ground", "p", waveform=step(1)),
                el("R1", "resistor", "x", "ground", 1),
                couplings=(
                    m.Coupling(
                        "T1",
                        m.CouplingKind.TRANSFORMER,
                        m.Port("p", "ground"),
                        m.Port("q", "ground"),
                        Q(2),
                    ),
                ),
            )
        )


def test_capacitor_loop_with_inconsistent_initial_voltages_is_a_note() -> None:
    sol = assemble(
        net(
            el("R1", "resistor", "a", "ground", 1),
            el("C1", "capacitor", "a", "ground", 1, initial=5),
            el("C2", "capacitor", "a", "ground", 1, initial=0),
        )
    )
    assert any("C1" in n and "C2" in n and "KVL" in n for n in sol.notes)
    # Charge sharing (common practice): after the impulse both hold 2.5 V.
    v = sol.response(qty("voltage", "a")).transform
    assert same(sympy.limit(s * v, s, sympy.oo), Q(5, 2))


def test_consistent_capacitor_loop_has_no_note() -> None:
    sol = assemble(
        net(
            el("C1", "capacitor", "a", "b", 1, initial=2),
            el("C2", "capacitor", "b", "ground", 1, initial=3),
            el("C3", "capacitor", "a", "ground", 1, initial=5),
            el("R1", "resistor", "a", "ground", 1),
        )
    )
    assert sol.notes == ()


def test_inductor_cut_set_with_inconsistent_currents_is_a_note() -> None:
    sol = assemble(
        net(
            el("L1", "inductor", "a", "m", 1, initial=2),
            el("L2", "inductor", "m", "ground", 1, initial=0),
            el("R1", "resistor", "a", "ground", 1),
        )
    )
    assert any("L1" in n and "L2" in n and "KCL" in n for n in sol.notes)


def test_unknown_targets_and_domain_mismatch() -> None:
    sol = assemble(net(el("R1", "resistor", "a", "ground", 1), el("M", "mass", "b", "frame", 1)))
    with pytest.raises(ValidationError):
        sol.response(qty("voltage", "nowhere"))
    with pytest.raises(ValidationError):
        sol.response(qty("current", "R9", "in"))
    with pytest.raises(ValidationError):
        sol.response(qty("velocity", "a"))
    with pytest.raises(ValidationError):
        sol.response(qty("force", "R1", "in"))
    assert sol.node_quantity("b").kind is m.QuantityKind.VELOCITY


# --------------------------------------------------------------------------- properties


@settings(max_examples=25, deadline=None)
@given(
    r=st.lists(st.integers(1, 50), min_size=3, max_size=3),
    c=st.lists(st.integers(1, 50), min_size=3, max_size=3),
    v0=st.integers(-5, 5),
    point=st.integers(1, 9),
)
def test_kcl_holds_at_every_node(r: list[int], c: list[int], v0: int, point: int) -> None:
    # Kirchhoff's current law, checked independently of the assembly: at a sample
    # point s0, the element currents computed from the node voltages sum to zero.
    parts = (
        el("I1", "current source", "ground", "a", waveform=step(3)),
        el("R1", "resistor", "a", "b", r[0]),
        el("R2", "resistor", "b", "ground", r[1]),
        el("R3", "resistor", "a", "c", r[2]),
        el("C1", "capacitor", "b", "c", Q(c[0], 10), initial=v0),
        el("C2", "capacitor", "c", "ground", Q(c[1], 10)),
        el("C3", "capacitor", "a", "ground", Q(c[2], 10)),
    )
    sol = assemble(net(*parts))
    v = {n: sol.response(qty("voltage", n)).transform.subs(s, point) for n in "abc"}
    v["ground"] = 0
    out = {n: sympy.Integer(0) for n in "abc"}
    inj = {"a": sympy.Rational(3, point)}
    for e in parts[1:]:
        drop = v[e.positive] - v[e.negative]
        i = (
            drop / e.value
            if e.kind is m.Kind.RESISTOR
            else point * e.value * drop - e.value * (e.initial or 0)
        )
        for node, sign in ((e.positive, 1), (e.negative, -1)):
            if node != "ground":
                out[node] += sign * i
    for n in "abc":
        assert sympy.simplify(out[n] - inj.get(n, 0)) == 0


def test_a_validated_topology_is_solved_as_the_netlist_and_results_are_frozen() -> None:
    import dataclasses

    from lumped.topology import validate

    netlist = net(el("V1", "voltage source", "in", "ground", waveform=step(1)),
                  el("R1", "resistor", "in", "out", 1), el("C1", "capacitor", "out", "ground", 1))
    solution = assemble(validate(netlist))
    # RC low-pass, step 1: 1/(s (s + 1)) (common practice).
    response = solution.response(qty("voltage", "out"))
    assert same(response.transform, 1 / (s * (s + 1)))
    assert same(assemble(netlist).response(qty("voltage", "out")).transform, response.transform)
    with pytest.raises(dataclasses.FrozenInstanceError):
        solution.notes = ("x",)  # type: ignore[misc]
    with pytest.raises(dataclasses.FrozenInstanceError):
        response.transform = s  # type: ignore[misc]
    with pytest.raises(TypeError):
        solution.plan.inputs[0].column[0] = 1  # type: ignore[index]
    assert isinstance(solution.numerators, tuple) and isinstance(response.contributions, tuple)
