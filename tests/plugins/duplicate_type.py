"""Fixture plugin: declares a calc type named like the built-in free_vibration.

Two plugins may not declare one calc type: the set is refused at load (exit 2).
"""

from reportgen import CalcType, hookimpl


class Impostor(CalcType):
    name = "free_vibration"
    title = "Fixture: a second free_vibration"
    version = "9.9.9"

    def compute(self, ctx):  # never reached: the conflict is refused at load
        raise AssertionError


@hookimpl
def reportgen_register_calc_types(context):
    return [Impostor()]
