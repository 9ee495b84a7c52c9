// The workbench: which job of the page is in view. One job is shown at a time beside the
// water (whose inputs and headline stay in view); the others wait hidden and need not compute
// until they are shown. No DOM here: workbench-view.js shows and hides the sections when the
// shown job changes, and any section may listen.
//
// Contract used by every section:
//   isJobShown(name)            true while that job's section is on screen
//   onJobShown(name, listener)  listener(name) each time that job becomes visible (after its
//                               section is unhidden, so sizes can be measured: compute what
//                               was put off, resize Bokeh plots); returns an unsubscribe function
//   showJob(name)               bring that job into view (the switcher and links between jobs)
//   JOBS, JOB_NAMES             the jobs in the switcher's order

/** The jobs, in the order the switcher lists them; `label` is the switcher's short word. */
export const JOBS = Object.freeze([
  { name: "water", label: "Water", title: "The water in detail: species, plots, free and bound, saturation" },
  { name: "treat", label: "Treat", title: "Dose a chemical to a target" },
  { name: "titrate", label: "Titrate", title: "Titration of a sample and buffering" },
  { name: "scale", label: "Scale and corrosion", title: "Calcium carbonate: scaling or corrosive" },
  { name: "softening", label: "Softening", title: "Lime softening" },
  { name: "lead", label: "Lead and copper", title: "Lead and copper solubility" },
  { name: "hardness", label: "Hardness", title: "Hardness by EDTA titration" },
  { name: "batch", label: "Many samples", title: "A CSV of samples at once" },
  { name: "explorer", label: "One-acid explorer", title: "The species of one acid across pH" },
].map((job) => Object.freeze(job)));

export const JOB_NAMES = Object.freeze(JOBS.map((job) => job.name));

/** The job the page opens with. */
export const FIRST_JOB = "water";

let shown = FIRST_JOB;
const jobListeners = new Map(JOB_NAMES.map((name) => [name, new Set()]));
const changeListeners = new Set();

function known(name) {
  if (!jobListeners.has(name)) throw new Error(`no job named "${name}" (jobs: ${JOB_NAMES.join(", ")})`);
  return name;
}

/** Whether `name` is a job of the workbench. */
export function isJob(name) {
  return jobListeners.has(name);
}

/** The name of the job in view. */
export function shownJob() {
  return shown;
}

/** True while the job `name` is the one in view. */
export function isJobShown(name) {
  return shown === known(name);
}

/**
 * Call `listener(name)` each time the job `name` becomes visible (not at registration: check
 * isJobShown(name) for the present state).
 *
 * @returns {() => void} removes the listener
 */
export function onJobShown(name, listener) {
  const set = jobListeners.get(known(name));
  set.add(listener);
  return () => set.delete(listener);
}

/**
 * Call `listener(name, previous)` whenever the shown job changes, before the job's own
 * listeners (the view uses it to unhide the section first).
 *
 * @returns {() => void} removes the listener
 */
export function onJobChange(listener) {
  changeListeners.add(listener);
  return () => changeListeners.delete(listener);
}

function callEach(listeners, ...args) {
  for (const listener of [...listeners]) {
    try {
      listener(...args);
    } catch (error) {
      // One section's failure must not keep the others from hearing that a job is shown.
      console.error(`a listener of job "${args[0]}" failed:`, error);
    }
  }
}

/**
 * Bring the job `name` into view (hiding the one that was). Nothing happens when it already is.
 *
 * @returns {boolean} whether the shown job changed
 */
export function showJob(name) {
  known(name);
  if (name === shown) return false;
  const previous = shown;
  shown = name;
  callEach(changeListeners, name, previous);
  callEach(jobListeners.get(name), name);
  return true;
}
