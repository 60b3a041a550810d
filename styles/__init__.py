"""House styles: Jinja2 templates and CSS. ``default/`` is the built-in style."""
