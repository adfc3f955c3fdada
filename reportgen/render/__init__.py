"""Rendering: document -> assets (figures, equations) -> HTML (Jinja2) -> PDF (WeasyPrint).

Renderers only translate a final document; they compute nothing about the design.
"""
