"""eaveline's Jupyter front end (ipywidgets 8 and bqplot).

The widgets observe a project and the core's results and render them; they never compute
physics. :class:`Planner` is the composite planner: it owns the project and the analysis and
composes the plan (:mod:`.plan_view`), the figures under it (:mod:`.totals`) and one panel per
tab (:mod:`.module_panel`, :mod:`.forms`, :mod:`.survey_panel`, :mod:`.sky_panel`,
:mod:`.hours_panel`, :mod:`.compare_panel`, :mod:`.file_panel`). ``python -m widgets`` serves
the planner as a web app with Voila.
"""

from .charts import HoursHeatMap
from .forms import ObstructionForm
from .plan_view import PlanView
from .planner import Planner
from .sky_chart import SkyChart
from .survey_panel import SurveyPanel
from .timeline import Timeline

__all__ = ["HoursHeatMap", "ObstructionForm", "PlanView", "Planner", "SkyChart", "SurveyPanel",
           "Timeline"]
