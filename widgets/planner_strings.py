"""The planner's Strings tab wiring: sizing and options shown, one kept, strings drawn.

A mixin of :class:`widgets.planner.Planner`: the methods read and change the planner's project
through ``set_project`` like every other edit, so each kept or drawn string is an undo step.
"""

from __future__ import annotations

from dataclasses import replace

from layout.errors import InputError
from layout.power.stringing import check_strings
from layout.study.string_options import compare_stringing, with_plan

__all__ = ["StringsWiring"]


class StringsWiring:
    """The Strings tab's callbacks of the planner.

    Reads the planner's ``project``, ``analysis``, ``strings_panel`` and ``string_lines``, and
    changes the project through its ``set_project``.
    """

    def _run_strings(self) -> None:
        if self._strings_for is self.project:
            return
        self._strings_for = self.project
        try:
            comparison = compare_stringing(self.analysis.result)
        except InputError as err:
            self.strings_panel.show(self.project, problem=str(err))
        else:
            self.strings_panel.show(self.project, comparison)
        self._draw_strings()

    def _draw_strings(self) -> None:
        centres = {m.id: tuple(m.centre_3d[:2]) for m in self.analysis.result.modules}
        self.strings_panel.own_strings = tuple(self.project.energy.electrical.strings or ())
        self.string_lines.show(self.strings_panel.plan_strings(), centres,
                               units=self.project.units, draft=self.strings_panel.draft)

    def _use_stringing(self, method: str) -> None:
        comparison = self.strings_panel.comparison
        if comparison is None or method not in comparison.plans:
            self.strings_panel.say("No such option to use yet.", error=True)
            return
        try:
            project = with_plan(self.project, comparison.plans[method])
        except InputError as err:
            self.strings_panel.say(str(err), error=True)
            return
        label = comparison.table.loc[method, "label"]
        if self.set_project(project, message=f"Strings {label} kept as the project's."):
            self.strings_panel.show_on_plan.value = "project"
            self.strings_panel.say(f"The strings {label} are now the project's.")

    def _design_typed(self, values: dict) -> None:
        try:
            design = replace(self.project.strings, **values)
        except InputError as err:
            self.strings_panel.say(str(err), error=True)
            return
        if self.set_project(self.project.with_changes(strings=design),
                            message="String design temperatures and limits changed."):
            self.strings_panel.say("Sized again with the values typed.")

    def _strings_drawn(self, strings) -> None:
        comparison = self.strings_panel.comparison
        if strings is not None and comparison is not None:
            try:  # the sizing's limits, before the project changes
                check_strings(strings, self.analysis.result.modules, comparison.sizing)
            except InputError as err:
                self.strings_panel.say(str(err), error=True)
                return
        energy = self.project.energy
        electrical = replace(energy.electrical, strings=strings)
        project = self.project.with_changes(
            energy=replace(energy, electrical=electrical),
            strings=replace(self.project.strings, inputs=None))
        words = "Strings cleared." if strings is None else f"String S{len(strings)} added."
        if self.set_project(project, message=words):
            self.strings_panel.drawn_accepted()
            self.strings_panel.say(words)
        else:
            self.strings_panel.say("Not changed: the status line says why.", error=True)

