// Starts the Python worker as early as possible: this module runs before BokehJS (a deferred
// classic script) is executed, so Pyodide loads while the rest of the page gets ready.
import { sharedPython } from "./py.js";
import { checkForUpdates } from "./updates.js";

sharedPython();
checkForUpdates(window);
