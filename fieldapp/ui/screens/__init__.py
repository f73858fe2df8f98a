"""The screens of the tablet app, by name."""

from fieldapp.ui.screens.due import DueScreen
from fieldapp.ui.screens.export import ExportScreen
from fieldapp.ui.screens.leak import LeakScreen
from fieldapp.ui.screens.repair import RepairScreen
from fieldapp.ui.screens.site import SiteScreen
from fieldapp.ui.screens.start import StartScreen
from fieldapp.ui.screens.survey import SurveyScreen
from fieldapp.ui.screens.survey_run import SurveyRunScreen

SCREENS = {
    "start": StartScreen, "site": SiteScreen, "survey": SurveyScreen, "survey_run": SurveyRunScreen,
    "leak": LeakScreen, "repair": RepairScreen, "due": DueScreen, "export": ExportScreen,
}
