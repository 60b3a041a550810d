"""One spelling per symbol: how a name of the input (T_inf, c_p, rho, eps) is set on the printed sheet, in an
equation's LaTeX and in a paragraph or a table cell, from the one table below, so that a checker never meets
T_inf in a table and T with a subscript infinity in the equation above it.

A subscript that describes (c_p, Q_in, V_s) is set upright and one that names a quantity (v_C, t_V) or
counts (t_k) is set italic, as ISO 80000-2 asks (from memory). A name of several subscripts (Q_in_amp, the
amplitude of a forcing of Q_in) sets them apart with commas, Q with subscript "in,amp" (common practice, no
source). The text record and the JSON keep the names as written.
"""

from __future__ import annotations

import re

# name -> (LaTeX, Unicode); eps and epsilon are both the straight epsilon the kinds' laws use
GREEK = {
    "alpha": (r"\alpha", "α"),
    "beta": (r"\beta", "β"),
    "gamma": (r"\gamma", "γ"),
    "delta": (r"\delta", "δ"),
    "eps": (r"\varepsilon", "ε"),
    "epsilon": (r"\varepsilon", "ε"),
    "zeta": (r"\zeta", "ζ"),
    "eta": (r"\eta", "η"),
    "theta": (r"\theta", "θ"),
    "kappa": (r"\kappa", "κ"),
    "lambda": (r"\lambda", "λ"),
    "mu": (r"\mu", "μ"),
    "nu": (r"\nu", "ν"),
    "xi": (r"\xi", "ξ"),
    "pi": (r"\pi", "π"),
    "rho": (r"\rho", "ρ"),
    "sigma": (r"\sigma", "σ"),
    "tau": (r"\tau", "τ"),
    "phi": (r"\phi", "φ"),
    "chi": (r"\chi", "χ"),
    "psi": (r"\psi", "ψ"),
    "omega": (r"\omega", "ω"),
    "Gamma": (r"\Gamma", "Γ"),
    "Delta": (r"\Delta", "Δ"),
    "Theta": (r"\Theta", "Θ"),
    "Lambda": (r"\Lambda", "Λ"),
    "Xi": (r"\Xi", "Ξ"),
    "Pi": (r"\Pi", "Π"),
    "Sigma": (r"\Sigma", "Σ"),
    "Phi": (r"\Phi", "Φ"),
    "Psi": (r"\Psi", "Ψ"),
    "Omega": (r"\Omega", "Ω"),
}
SIGNS = {"inf": (r"\infty", "∞")}  # subscripts written as a sign: T_inf is T with subscript infinity
COUNTING = frozenset("ijk")  # one-letter subscripts that count (t_k), italic
_NAME = re.compile(r"^([A-Za-z]+)((?:_[A-Za-z0-9]+)*)$")
SUBSCRIPT_SEPARATOR = ","  # between the subscripts of one name


def parts(name: str) -> tuple[str, str] | None:
    """(base, subscript) of a name this table spells (subscript "" for none, several joined by commas); None for
    any other name."""
    match = _NAME.match(name)
    return (match.group(1), SUBSCRIPT_SEPARATOR.join(match.group(2).split("_")[1:])) if match else None


def symbol_tex(name: str) -> str | None:
    """The LaTeX of ``name``, or None when the table does not spell it (the caller then uses sympy's)."""
    found = parts(name)
    if found is None:
        return None
    base, subscript = found
    if base in GREEK:
        tex = GREEK[base][0]
    elif len(base) == 1 or subscript:
        tex = base
    else:
        return None  # a word with no subscript (Bi, Lc): sympy's form
    return tex + (f"_{{{_subscript_tex(subscript)}}}" if subscript else "")


def _subscript_tex(subscript: str) -> str:
    if SUBSCRIPT_SEPARATOR in subscript:
        return SUBSCRIPT_SEPARATOR.join(_subscript_tex(part) for part in subscript.split(SUBSCRIPT_SEPARATOR))
    if subscript in SIGNS:
        return SIGNS[subscript][0]
    if subscript in GREEK:
        return GREEK[subscript][0]
    if subscript.isdigit() or (len(subscript) == 1 and (subscript.isupper() or subscript in COUNTING)):
        return subscript
    return rf"\mathrm{{{subscript}}}"


def symbol_text(name: str) -> tuple[str, str]:
    """(base, subscript) of ``name`` as prose and table cells print it: ('T', '∞') for T_inf, ('ρ', '') for rho.
    A name the table does not spell comes back as written."""
    found = parts(name)
    if found is None:
        return name, ""
    base, subscript = found
    base = GREEK[base][1] if base in GREEK else base
    return base, SUBSCRIPT_SEPARATOR.join(_subscript_text(part) for part in subscript.split(SUBSCRIPT_SEPARATOR))


def _subscript_text(subscript: str) -> str:
    if subscript in SIGNS:
        return SIGNS[subscript][1]
    return GREEK[subscript][1] if subscript in GREEK else subscript


def respelled(name: str) -> bool:
    """Whether ``name`` prints otherwise than as written (a subscript or a Greek letter)."""
    return symbol_text(name) != (name, "")
