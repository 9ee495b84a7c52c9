// Unit tests of site/batch.js's pure parts (no DOM, no worker): how a CSV is cut into sample
// records before the lines go to the core, how requests are sized, how many extra workers start.
import { test } from "node:test";
import assert from "node:assert/strict";
import { CHUNK_LIMITS, FIRST_CHUNK_ROWS, MAX_HELPERS, chunkSize, helperCount, splitRecords } from "../../site/batch.js";

test("records: a quoted line break stays inside its record, CRLF and a byte-order mark are read", () => {
  // RFC 4180 quoting (a field in double quotes may hold line breaks and doubled quotes), common practice
  const text = '\ufeffid;pH\r\n"two\nlines";7,25\r\n"say ""hi""";8\r\n';
  const { header, records } = splitRecords(text);
  assert.equal(header, "id;pH");
  assert.deepEqual(records, ['"two\nlines";7,25', '"say ""hi""";8']);
});

test("records: inner blank lines are kept (row numbers stay the file's), a final line end is not a record", () => {
  const { records } = splitRecords("pH\n7\n\n8\n");
  assert.deepEqual(records, ["7", "", "8"]);
  assert.deepEqual(splitRecords("pH\n7").records, ["7"]);
  assert.deepEqual(splitRecords("pH\r7\r8").records, ["7", "8"]); // old Mac line ends
  assert.deepEqual(splitRecords("").records, []);
});

test("requests are sized from the measured time per sample, within the limits", () => {
  assert.equal(chunkSize(null, 250), FIRST_CHUNK_ROWS);
  assert.equal(chunkSize(0, 250), FIRST_CHUNK_ROWS);
  assert.equal(chunkSize(0.5, 250), 500);
  assert.equal(chunkSize(1e-6, 1000), CHUNK_LIMITS[1]);
  assert.equal(chunkSize(5000, 250), CHUNK_LIMITS[0]);
});

test("one extra worker per core beyond the first, at most MAX_HELPERS", () => {
  assert.equal(helperCount(1), 0);
  assert.equal(helperCount(2), 1);
  assert.equal(helperCount(4), 3);
  assert.equal(helperCount(64), MAX_HELPERS);
  assert.equal(helperCount(0), 0);
});
