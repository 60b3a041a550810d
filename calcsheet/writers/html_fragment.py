"""The HTML sheet as a fragment to set inside another page (a notebook's output cell).

It is the HTML writer's own page, so the fragment shows exactly what the .html file shows (MathML equations,
the plot, escaped user text), taken out of its page: the body's content in a <div>, without <html>, <head> or
<body>. A style sheet in an HTML page applies to the whole page, so every rule is scoped to that <div> with
tinycss2 (a selector gets the <div>'s class in front; ``:root``, ``html`` and ``body`` become the <div>
itself), including the plot's own SVG style; ``@page`` and ``@import`` rules, which cannot be scoped, are left
out. The class carries a hash of the styles, so two sheets of different house styles on one page keep theirs.
"""

from __future__ import annotations

import hashlib
import re

from calcsheet.sheet.document import Sheet

_BODY = re.compile(r"<body(?P<attributes>[^>]*)>(?P<content>.*)</body>", re.DOTALL)
_HEAD_STYLE = re.compile(r"<head>.*?<style>(?P<css>.*?)</style>.*?</head>", re.DOTALL)
_STYLE = re.compile(r"(?P<open><style[^>]*>)(?P<css>.*?)(?P<close></style>)", re.DOTALL)
_CLASS = re.compile(r'\bclass="(?P<names>[^"]*)"')
_PAGE_ROOT = re.compile(r"(?::root|html|body)(?![\w-])")
_UNSCOPABLE = {"page", "import", "charset", "namespace"}
_NESTED = {"media", "supports", "layer", "container"}


def write(sheet: Sheet, style=None) -> str:
    """The sheet's HTML body in a scoped <div>, its styles with it."""
    from calcsheet.writers.html import write as write_page

    return fragment(write_page(sheet, style))


def fragment(page: str) -> str:
    """``page`` (the HTML writer's output) as a self-contained fragment."""
    body = _BODY.search(page)
    head = _HEAD_STYLE.search(page)
    if body is None:
        raise ValueError("the HTML sheet has no <body> to take")
    css = head.group("css") if head else ""
    scope = "calcsheet-" + hashlib.sha256(css.encode("utf-8")).hexdigest()[:12]
    classes = _CLASS.search(body.group("attributes"))
    names = " ".join(["calcsheet-sheet", scope] + ([classes.group("names")] if classes else []))
    content = _STYLE.sub(
        lambda m: m.group("open") + scoped_css(m.group("css"), scope) + m.group("close"), body["content"]
    )
    return f'<div class="{names}">\n<style>\n{scoped_css(css, scope)}</style>\n{content.strip()}\n</div>\n'


def scoped_css(css: str, scope: str) -> str:
    """Every rule of ``css`` limited to elements inside ``.scope`` (and the page's root rules given to it)."""
    import tinycss2

    rules = tinycss2.parse_stylesheet(css, skip_comments=True, skip_whitespace=True)
    return "".join(_rule(rule, scope, tinycss2) for rule in rules)


def _rule(rule, scope: str, tinycss2) -> str:
    if rule.type == "qualified-rule":
        selectors = ", ".join(_scoped(s, scope) for s in _selectors(rule.prelude, tinycss2))
        return f"{selectors} {{{tinycss2.serialize(rule.content).strip()}}}\n"
    if rule.type == "at-rule":
        keyword = rule.lower_at_keyword
        if keyword in _UNSCOPABLE:
            return ""
        prelude = tinycss2.serialize(rule.prelude).strip()
        if keyword in _NESTED and rule.content is not None:
            inner = tinycss2.parse_rule_list(rule.content, skip_comments=True, skip_whitespace=True)
            return f"@{keyword} {prelude} {{\n{''.join(_rule(r, scope, tinycss2) for r in inner)}}}\n"
        return tinycss2.serialize([rule]) + "\n"  # @font-face and the like name no elements
    return ""  # a parse error in a house style's CSS: the browser would drop it too


def _selectors(prelude, tinycss2) -> list[str]:
    """The selectors of a rule's prelude, split at its top-level commas (not those inside ``:is(a, b)``)."""
    parts, current = [], []
    for token in prelude:
        if token.type == "literal" and token.value == ",":
            parts.append(current)
            current = []
        else:
            current.append(token)
    parts.append(current)
    return [text for text in (tinycss2.serialize(p).strip() for p in parts) if text]


def _scoped(selector: str, scope: str) -> str:
    """``h1`` -> ``.scope h1``; ``:root``, ``html body``, ``body.medium-screen`` -> the scope itself."""
    rest, took = selector, False
    while (found := _PAGE_ROOT.match(rest.lstrip() if took else rest)) is not None:
        rest = (rest.lstrip() if took else rest)[found.end() :]
        took = True
    if took:
        return f".{scope}{rest}"
    return f".{scope} {selector}"
