"""The UNO components of the steamcell Calc extension.

- `org.steamcell.calc.Functions`: the Calc add-in (service com.sun.star.sheet.AddIn). One
  method per spreadsheet function of clients/functions.json (the table is generated into
  pythonpath/steamcell_sheet/table.py); each hands its arguments to steamcell_sheet.functions
  and turns the answer into a cell value: a number or a text, or an error value - #VALUE! for a
  bad input or a state that cannot be computed, #N/A when no engine answers. The message of
  either is what =SC.WHY(...) shows.
- `org.steamcell.calc.OptionsHandler`: the page Tools > Options > LibreOffice Calc > steamcell
  (dialogs/Options.xdl), reading and writing the add-in's options (Settings.xcs: EngineBinary,
  ServerUrl, ServerToken, ServerCaFile, ExpectDigest, Sites) in the user profile, never in a
  workbook.

The engine (the steamcell program started as a child, or a team server) starts on the first
call, restarts when the options change, and stops when LibreOffice terminates.
"""

import struct
import threading

import uno
import unohelper
from com.sun.star.awt import XContainerWindowEventHandler
from com.sun.star.frame import XTerminateListener
from com.sun.star.lang import XServiceInfo, XServiceName
from com.sun.star.util import XChangesListener
from org.steamcell.calc import XFunctions

from steamcell_sheet.cells import CellError
from steamcell_sheet.engine import Settings
from steamcell_sheet.functions import Sheet
from steamcell_sheet.table import FUNCTIONS, IMPLEMENTATION

SETTINGS_NODE = "/org.steamcell.calc.Settings/Engine"
SETTING_NAMES = ("EngineBinary", "ServerUrl", "ServerToken", "ServerCaFile", "ExpectDigest", "Sites")
OPTIONS_IMPLEMENTATION = "org.steamcell.calc.OptionsHandler"
ADDIN_SERVICE = "com.sun.star.sheet.AddIn"

# Calc's error values travel as a NaN whose low bits hold the error code.
ERR_VALUE = 519  # #VALUE!
ERR_NA = 32767  # #N/A


def error_value(code: int) -> float:
    return struct.unpack("<d", struct.pack("<Q", 0x7FF8000000000000 | code))[0]


def cell_error(e: CellError) -> float:
    return error_value(ERR_NA if e.kind == "engine" else ERR_VALUE)


def _prop(name, value):
    p = uno.createUnoStruct("com.sun.star.beans.PropertyValue")
    p.Name, p.Value = name, value
    return p


class _Options(unohelper.Base, XChangesListener):
    """The add-in's options from the configuration, re-read after they change."""

    def __init__(self, ctx):
        self.ctx = ctx
        self._values = None
        self._access = None
        self._lock = threading.Lock()

    def _read(self):
        provider = self.ctx.ServiceManager.createInstanceWithContext(
            "com.sun.star.configuration.ConfigurationProvider", self.ctx)
        access = provider.createInstanceWithArguments(
            "com.sun.star.configuration.ConfigurationAccess", (_prop("nodepath", SETTINGS_NODE),))
        values = {n: (access.getByName(n) or "") for n in SETTING_NAMES}
        if self._access is None:
            self._access = access
            access.addChangesListener(self)
        return values

    def values(self) -> dict:
        with self._lock:
            if self._values is None:
                try:
                    self._values = self._read()
                except Exception:
                    self._values = {}
            return dict(self._values)

    def changesOccurred(self, event):
        with self._lock:
            self._values = None

    def disposing(self, source):
        with self._lock:
            self._values = None
            self._access = None


class _Stopper(unohelper.Base, XTerminateListener):
    """Stops the engine when LibreOffice terminates."""

    def __init__(self, sheet):
        self.sheet = sheet

    def queryTermination(self, event):
        pass

    def notifyTermination(self, event):
        self.sheet.close()

    def disposing(self, source):
        self.sheet.close()


_STATE = {}
_STATE_LOCK = threading.Lock()


def shared_sheet(ctx) -> Sheet:
    """The one Sheet of this LibreOffice process (every add-in instance shares the engine)."""
    with _STATE_LOCK:
        sheet = _STATE.get("sheet")
        if sheet is None:
            options = _Options(ctx)
            sheet = Sheet(lambda: Settings.resolve(options.values()))
            try:
                desktop = ctx.ServiceManager.createInstanceWithContext("com.sun.star.frame.Desktop", ctx)
                stopper = _Stopper(sheet)
                desktop.addTerminateListener(stopper)
                _STATE["stopper"] = stopper
            except Exception:
                pass
            import atexit
            atexit.register(sheet.close)
            _STATE["sheet"] = sheet
            _STATE["options"] = options
        return sheet


def _as_cell(value):
    if isinstance(value, str):
        return value
    return float(value)


def _scalar_function(role):
    def run(self, *args):
        sheet = shared_sheet(self.ctx)
        try:
            if role in ("method", "site"):
                head, pairs = args[:2], args[2] if len(args) > 2 else ()
                return _as_cell(getattr(sheet, role)(head[0], head[1], pairs or ()))
            return _as_cell(getattr(sheet, role)(*args))
        except CellError as e:
            return cell_error(e)
        except Exception:
            return error_value(ERR_VALUE)
    return run


def _columns_function(self, *args):
    sheet = shared_sheet(self.ctx)
    try:
        values, _failures, orientation = sheet.columns(*args)
    except CellError as e:
        return ((cell_error(e),),)
    except Exception:
        return ((error_value(ERR_VALUE),),)
    bad = error_value(ERR_VALUE)
    cells = tuple(bad if v is None else v for v in values)
    if orientation == "row":
        return (cells,)
    return tuple((v,) for v in cells)


def _why_function(self, function, args):
    sheet = shared_sheet(self.ctx)
    try:
        return sheet.why(function, args or ())
    except CellError as e:
        return e.message
    except Exception as e:  # a defect of the add-in: say so rather than show nothing
        return f"internal error of the steamcell add-in: {e!r}"


def _info_function(self, item):
    sheet = shared_sheet(self.ctx)
    try:
        return sheet.info(item)
    except CellError as e:
        return cell_error(e)


class Functions(unohelper.Base, XFunctions, XServiceName, XServiceInfo):
    """The Calc add-in; its methods are attached below from the generated table."""

    def __init__(self, ctx, *args):
        self.ctx = ctx

    def getServiceName(self):
        return IMPLEMENTATION

    def getImplementationName(self):
        return IMPLEMENTATION

    def supportsService(self, name):
        return name in (ADDIN_SERVICE, IMPLEMENTATION)

    def getSupportedServiceNames(self):
        return (ADDIN_SERVICE, IMPLEMENTATION)


for _f in FUNCTIONS:
    if _f.role == "columns":
        _impl = _columns_function
    elif _f.role == "why":
        _impl = _why_function
    elif _f.role == "info":
        _impl = _info_function
    else:
        _impl = _scalar_function(_f.role)
    setattr(Functions, _f.method, _impl)


class OptionsHandler(unohelper.Base, XContainerWindowEventHandler, XServiceInfo):
    """The options page: fills the dialog's fields from the options on "initialize" and
    "back", writes them on "ok". The dialog's text fields are named as the options."""

    def __init__(self, ctx, *args):
        self.ctx = ctx

    def getImplementationName(self):
        return OPTIONS_IMPLEMENTATION

    def supportsService(self, name):
        return name == OPTIONS_IMPLEMENTATION

    def getSupportedServiceNames(self):
        return (OPTIONS_IMPLEMENTATION,)

    def getSupportedMethodNames(self):
        return ("external_event",)

    def callHandlerMethod(self, window, event, method):
        if method != "external_event":
            return False
        provider = self.ctx.ServiceManager.createInstanceWithContext(
            "com.sun.star.configuration.ConfigurationProvider", self.ctx)
        if event in ("initialize", "back"):
            access = provider.createInstanceWithArguments(
                "com.sun.star.configuration.ConfigurationAccess", (_prop("nodepath", SETTINGS_NODE),))
            for name in SETTING_NAMES:
                control = window.getControl(name)
                if control is not None:
                    control.getModel().Text = access.getByName(name) or ""
            return True
        if event == "ok":
            access = provider.createInstanceWithArguments(
                "com.sun.star.configuration.ConfigurationUpdateAccess",
                (_prop("nodepath", SETTINGS_NODE),))
            for name in SETTING_NAMES:
                control = window.getControl(name)
                if control is not None:
                    access.replaceByName(name, control.getModel().Text.strip())
            access.commitChanges()
            return True
        return False


g_ImplementationHelper = unohelper.ImplementationHelper()
g_ImplementationHelper.addImplementation(Functions, IMPLEMENTATION, (ADDIN_SERVICE, IMPLEMENTATION))
g_ImplementationHelper.addImplementation(OptionsHandler, OPTIONS_IMPLEMENTATION, (OPTIONS_IMPLEMENTATION,))
