// DOM code of the "Softening" job (#job-softening): lime and soda ash to equilibrium with
// calcite and brucite, the sludge, recarbonation, and the textbook stoichiometric estimate
// beside it. Markup built at mount (static text only); numbers and core messages go in
// through textContent. No chemistry here: softening.js hands over the core's result.
//
// Stable ids (tests rely on them):
//   #soften-mode ("calcium" | "magnesium") #soften-ph #soften-lime #soften-soda
//   #soften-target-hardness #soften-recarb-kind ("LSI" | "CCPP" | "pH" | "none")
//   #soften-recarb-value #soften-excess #soften-flow #soften-flow-unit
//   #<input-id>-error beside each; #soften-error for the block
//   #soften-results (data-state, aria-busy); data-softening-drawn on #job-softening
//   #soften-lime-dose #soften-lime-cao #soften-lime-kg #soften-soda-dose #soften-soda-kg
//   #soften-residual #soften-residual-ca #soften-residual-mg #soften-sludge #soften-sludge-kg
//   #soften-first-stage #soften-recarb (data-value: CO2 mg/L) with their messages
//   #soften-comparison (tbody tr[data-key]: td[data-key] equilibrium / stoichiometric /
//   difference with data-value), #soften-why (li), #soften-waters (tbody tr[data-key]),
//   #soften-cautions (li), #soften-warnings

import { fixed, plainNumber, sciNumber } from "./format.js";
import { FieldMessages, markResults } from "./view.js";
import { FLOW_UNITS } from "./treatment-view.js";
import {
  byId, countDrawn, field, fillList, flowField, fillOptions, isShown, listen, markBusy, mountBody, numberCell, para, readInputs,
  rowHead, showLines, showValue, showWater, signedFixed, writeInput,
} from "./job-view.js";

const MARKUP = `
  <p id="soften-water" class="treat-water" data-state="current"></p>
  <div class="treat-block" id="soften-block">
    <h3>Lime and soda ash softening, then recarbonation</h3>
    <form id="soften-form" class="inputs" novalidate autocomplete="off">
      ${field("soften-mode", "Remove", "", { select: true })}
      ${field("soften-ph", "Softening pH", "optional", { hint: "Empty: 10.3 for calcium, 11.0 with magnesium (common practice)." })}
      ${field("soften-lime", "Or a lime dose", "mg/L as Ca(OH)₂, optional")}
      ${field("soften-soda", "Soda ash dose", "mg/L as Na₂CO₃, optional")}
      ${field("soften-target-hardness", "Or soda ash to a total hardness of", "mg/L as CaCO₃, optional")}
      ${field("soften-recarb-kind", "Recarbonate with CO₂ to", "", { select: true })}
      ${field("soften-recarb-value", "Recarbonation target", "LSI, CCPP in mg/L as CaCO₃, or pH", { value: "0" })}
      ${field("soften-excess", "Excess lime of the textbook estimate", "meq/L, optional", { hint: "Empty: 1.25 meq/L with magnesium removal, none without (common practice)." })}
      ${flowField("soften-flow")}
      <p id="soften-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="soften-results" data-state="empty">
      <dl class="dose-figures">
        <div><dt>Lime</dt><dd><strong id="soften-lime-dose" data-value="">—</strong> · <span id="soften-lime-cao" data-value="">—</span> · <span id="soften-lime-kg" data-value="">—</span></dd></div>
        <div><dt>Soda ash</dt><dd><strong id="soften-soda-dose" data-value="">—</strong> · <span id="soften-soda-kg" data-value="">—</span></dd></div>
        <div><dt>Residual hardness</dt><dd><strong id="soften-residual" data-value="">—</strong> <span class="unit">(calcium <span id="soften-residual-ca" data-value="">—</span>, magnesium <span id="soften-residual-mg" data-value="">—</span>)</span></dd></div>
        <div><dt>Sludge, dry solids</dt><dd><strong id="soften-sludge" data-value="">—</strong> · <span id="soften-sludge-kg" data-value="">—</span> <span id="soften-sludge-solids" class="unit"></span></dd></div>
        <div><dt>First-stage recarbonation</dt><dd id="soften-first-stage" data-value="">—</dd></div>
        <div><dt>Recarbonation</dt><dd id="soften-recarb" data-value="">—</dd></div>
      </dl>
      <div id="soften-warnings" class="treat-warning" role="status" hidden></div>
      <div class="table-wrap" tabindex="0" role="region" aria-label="Equilibrium against the textbook estimate">
        <table id="soften-comparison">
          <caption>Equilibrium model against the textbook stoichiometric estimate</caption>
          <thead><tr><th scope="col">Quantity</th><th scope="col" class="num">Equilibrium</th><th scope="col" class="num">Stoichiometric</th><th scope="col" class="num">Difference</th></tr></thead>
          <tbody></tbody>
        </table>
      </div>
      <p class="hint" id="soften-why-title">Why they differ, for this water:</p>
      <ul id="soften-why" class="hint"></ul>
      <div class="table-wrap" tabindex="0" role="region" aria-label="The water before and after">
        <table id="soften-waters">
          <caption>The water before softening and after recarbonation</caption>
          <thead><tr><th scope="col">Quantity</th><th scope="col" class="num">Raw</th><th scope="col" class="num">Softened, settled</th><th scope="col" class="num">After recarbonation</th></tr></thead>
          <tbody></tbody>
        </table>
      </div>
      <p id="soften-method" class="hint"></p>
      <aside class="cautions" aria-labelledby="soften-cautions-title">
        <h4 id="soften-cautions-title">Before you change a chemical feed</h4>
        <ul id="soften-cautions"><li>Lime is caustic; soda ash dust irritates; CO₂ can suffocate in enclosed spaces. Confirm doses with a jar test; guard against overfeed; local codes and licensed operators decide.</li></ul>
      </aside>
    </div>
  </div>`;

export const SOFTEN_INPUTS = ["soften-mode", "soften-ph", "soften-lime", "soften-soda", "soften-target-hardness",
  "soften-recarb-kind", "soften-recarb-value", "soften-excess", "soften-flow", "soften-flow-unit"];

export class SofteningView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.section = byId(doc, "job-softening");
    // the whole width of the section's grid (its first row is the heading)
    mountBody(this.section, "job-body softening-body", MARKUP,
      { gridColumn: "1 / -1", display: "grid", gap: "0.9rem", minWidth: "0" });
    this.inputs = Object.fromEntries(SOFTEN_INPUTS.map((id) => [id, byId(doc, id)]));
    this.messages = new FieldMessages(doc, byId(doc, "soften-form"), "soften-error");
    this.results = byId(doc, "soften-results");
    byId(doc, "soften-form").addEventListener("submit", (e) => e.preventDefault());
    this.fill("soften-mode", [["calcium", "calcium only (lime to about pH 10.3)"], ["magnesium", "calcium and magnesium (excess lime, about pH 11)"]]);
    this.fill("soften-recarb-kind", [["LSI", "an LSI"], ["CCPP", "a CCPP (mg/L as CaCO₃)"], ["pH", "a pH"], ["none", "no recarbonation"]]);
    this.fill("soften-flow-unit", FLOW_UNITS);
  }

  fill(id, pairs) {
    fillOptions(this.inputs[id], pairs);
  }

  /** @returns {Record<string, string>} raw text of every input, by id */
  read() {
    return readInputs(this.inputs);
  }

  /** @returns {boolean} false when a select has no such option */
  write(id, value) {
    return writeInput(this.inputs[id], value);
  }

  showErrors(messages) {
    this.messages.show(messages);
  }

  setBusy(busy) {
    markBusy(this.results, busy);
  }

  setResultState(state, note) {
    markResults(this.results, state, note);
  }

  markDrawn() {
    countDrawn(this.section, "softeningDrawn");
  }

  setWater(text, stale = false) {
    showWater(byId(this.doc, "soften-water"), text, stale);
  }

  isVisible() {
    return isShown(this.section);
  }

  isChoice(id) {
    return this.inputs[id].tagName === "SELECT";
  }

  /** @param {(id: string) => void} handler  an input changed */
  bindChange(handler) {
    listen(this.inputs, handler);
  }

  value(id, number, text, empty = "—") {
    showValue(byId(this.doc, id), number, text, empty);
  }

  para(text, tag = "p") {
    return para(this.doc, text, tag);
  }

  cell(text, value, key, tag = "td") {
    return numberCell(this.doc, text, value, key, tag);
  }

  /** One recarbonation stage in words. */
  stage(id, step) {
    const el = byId(this.doc, id);
    el.dataset.value = step ? String(step.dose_mg_per_L) : "";
    if (!step) {
      el.textContent = "none";
      return;
    }
    const a = step.water_after ?? step.reached ?? {};
    const sign = (x, d) => signedFixed(x, d);
    el.textContent = `${sciNumber(step.dose_mg_per_L, 4)} mg/L of CO₂` +
      (Number.isFinite(step.pure_chemical_kg_per_d) ? ` (${plainNumber(step.pure_chemical_kg_per_d)} kg/d)` : "") +
      ` — ${step.message}; then pH ${fixed(a.pH, 2)}, LSI ${sign(a.LSI, 2)}, CCPP ${sign(a.CCPP_mg_per_L_as_CaCO3, 1)} mg/L as CaCO₃`;
  }

  /**
   * Show a softening result, or clear it (null).
   *
   * @param {object|null} r  the core's soften result
   */
  render(r) {
    const flowMissing = r ? "give the plant flow" : "—";
    this.value("soften-lime-dose", r?.lime?.dose_mg_per_L, `${fixed(r?.lime?.dose_mg_per_L, 1)} mg/L as Ca(OH)₂`);
    this.value("soften-lime-cao", r?.lime?.dose_mg_per_L_as_CaO, `${fixed(r?.lime?.dose_mg_per_L_as_CaO, 1)} mg/L as CaO`);
    this.value("soften-lime-kg", r?.lime?.kg_per_d, `${plainNumber(r?.lime?.kg_per_d)} kg/d`, flowMissing);
    this.value("soften-soda-dose", r?.soda_ash?.dose_mg_per_L, `${fixed(r?.soda_ash?.dose_mg_per_L, 1)} mg/L as Na₂CO₃ (${r?.soda_ash?.basis ?? ""})`);
    this.value("soften-soda-kg", r?.soda_ash?.kg_per_d, `${plainNumber(r?.soda_ash?.kg_per_d)} kg/d`, flowMissing);
    const res = r?.residual_hardness_mg_per_L_as_CaCO3;
    this.value("soften-residual", res?.total, `${fixed(res?.total, 1)} mg/L as CaCO₃`);
    this.value("soften-residual-ca", res?.calcium, `${fixed(res?.calcium, 1)}`);
    this.value("soften-residual-mg", res?.magnesium, `${fixed(res?.magnesium, 1)}`);
    this.value("soften-sludge", r?.sludge?.dry_solids_mg_per_L, `${fixed(r?.sludge?.dry_solids_mg_per_L, 1)} mg/L`);
    this.value("soften-sludge-kg", r?.sludge?.dry_solids_kg_per_d, `${plainNumber(r?.sludge?.dry_solids_kg_per_d)} kg/d`, flowMissing);
    byId(this.doc, "soften-sludge-solids").textContent = r
      ? `(${(r.sludge?.solids ?? []).map((s) => `${s.name} ${fixed(s.mg_per_L, 1)} mg/L, ${s.stage}`).join("; ") || "nothing formed"})` : "";
    if (r) {
      this.stage("soften-first-stage", r.first_stage_recarbonation);
      this.stage("soften-recarb", r.recarbonation);
    } else {
      for (const id of ["soften-first-stage", "soften-recarb"]) {
        byId(this.doc, id).textContent = "—";
        byId(this.doc, id).dataset.value = "";
      }
    }
    showLines(byId(this.doc, "soften-warnings"), r?.warnings ?? []);
    const comp = byId(this.doc, "soften-comparison").tBodies[0];
    const why = byId(this.doc, "soften-why");
    const waters = byId(this.doc, "soften-waters").tBodies[0];
    byId(this.doc, "soften-method").textContent = r ? `Method: ${r.method}. Textbook estimate: ${r.stoichiometric?.basis ?? ""}.` : "";
    if (!r) {
      comp.replaceChildren();
      why.replaceChildren();
      waters.replaceChildren();
      return;
    }
    const c = r.comparison;
    const rows = [
      ["lime_mg_per_L_as_CaO", "Lime", "mg/L as CaO"],
      ["soda_ash_mg_per_L", "Soda ash", "mg/L as Na₂CO₃"],
      ["residual_hardness_mg_per_L_as_CaCO3", "Residual hardness", "mg/L as CaCO₃"],
      ["sludge_mg_per_L", "Sludge, dry solids", "mg/L"],
    ];
    comp.replaceChildren(...rows.filter(([k]) => c[k]).map(([k, label, unit]) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.key = k;
      const d = c[k].difference;
      tr.append(rowHead(this.doc, label, unit), this.cell(fixed(c[k].equilibrium, 1), c[k].equilibrium, "equilibrium"),
        this.cell(fixed(c[k].stoichiometric, 1), c[k].stoichiometric, "stoichiometric"),
        this.cell((d > 0 ? "+" : "") + fixed(d, 1), d, "difference"));
      return tr;
    }));
    const ev = c.evidence ?? {};
    const evidence = Number.isFinite(ev.calcium_free_fraction)
      ? [`In this softened water ${fixed(100 * ev.calcium_free_fraction, 0)} % of the calcium is free (the rest in ion pairs), ` +
        `its activity coefficient is ${fixed(ev.calcium_activity_coefficient, 2)} at an ionic strength of ` +
        `${fixed(1e3 * ev.ionic_strength_M, 1)} mmol/L and ${fixed(ev.temperature_C, 1)} °C.`]
      : [];
    why.replaceChildren(...[...(c.why ?? []), ...evidence, ...(c.note ? [c.note] : [])].map((t) => this.para(t, "li")));
    const before = r.water_before;
    const softened = r.softened;
    const after = r.water_after;
    const quantities = [
      ["pH", "pH", "", 2],
      ["total_hardness_mg_per_L_as_CaCO3", "Total hardness", "mg/L as CaCO₃", 1],
      ["calcium_hardness_mg_per_L_as_CaCO3", "Calcium hardness", "mg/L as CaCO₃", 1],
      ["magnesium_hardness_mg_per_L_as_CaCO3", "Magnesium hardness", "mg/L as CaCO₃", 1],
      ["total_alkalinity_mg_per_L_as_CaCO3", "Total alkalinity", "mg/L as CaCO₃", 1],
      ["LSI", "LSI", "", 2],
      ["CCPP_mg_per_L_as_CaCO3", "CCPP", "mg/L as CaCO₃", 1],
    ];
    waters.replaceChildren(...quantities.map(([k, label, unit, d]) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.key = k;
      tr.append(rowHead(this.doc, label, unit), ...[["raw", before], ["softened", softened], ["after", after]].map(([key, w]) =>
        this.cell(fixed(w?.[k], d), w?.[k], key)));
      return tr;
    }));
    if (r.cautions?.length) fillList(byId(this.doc, "soften-cautions"), r.cautions);
  }
}
