// The room list: open a room file from disk (picker or drag-and-drop), start a new room.

import { request, problemsText } from "../lib/api.js";
import { wireNewRoom } from "./newroom.js";
import { wireList } from "./list.js";

const page = JSON.parse(document.getElementById("page-data").textContent);
const message = document.getElementById("import-message");

function show(text, isError) {
  message.textContent = text;
  message.className = isError ? "error" : "ok";
}

async function importText(text, fileName) {
  let res;
  try {
    res = await request("/api/rooms/import", { method: "POST", body: text });
  } catch (err) {
    show(`Could not reach Leafcast: ${err}`, true);
    return;
  }
  if (!res.ok) { show(`${fileName} was not opened: ${problemsText(res.body, 5)}. Nothing was changed.`, true); return; }
  show(`Opened ${fileName} as “${res.body.name}”.`, false);
  window.location.href = `/rooms/${res.body.id}`;
}

function readFile(file) {
  const reader = new FileReader();
  reader.onload = () => importText(String(reader.result), file.name);
  reader.onerror = () => show(`Could not read ${file.name}.`, true);
  reader.readAsText(file);
}

document.getElementById("import-file").addEventListener("change", (ev) => {
  if (ev.target.files.length) readFile(ev.target.files[0]);
  ev.target.value = "";
});
const target = document.getElementById("drop-target");
target.addEventListener("dragover", (ev) => { ev.preventDefault(); target.classList.add("dropping"); });
target.addEventListener("dragleave", () => target.classList.remove("dropping"));
target.addEventListener("drop", (ev) => {
  ev.preventDefault();
  target.classList.remove("dropping");
  if (ev.dataTransfer.files.length) readFile(ev.dataTransfer.files[0]);
});

wireNewRoom(page);
wireList();
