"""Fixture plugin: adds a filter and a global to the Jinja2 environment.

A firm's own running.html uses them; the test checks they reach the rendered page.
"""

from reportgen import hookimpl


@hookimpl
def reportgen_prepare_jinja_env(env, context):
    env.filters["spaced"] = lambda text: " ".join(str(text))
    env.globals["firm_motto"] = f"Measured twice (API {context['api_version']})"
