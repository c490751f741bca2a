// A refused entry is explained right under its own box (a ⚠ and the reason, tied to the box for screen
// readers); the message goes when the box is fixed. Shared by every page with a form.

let counter = 0;

export function showFieldError(input, messages, prefix = "Not applied: ") {
  const text = [].concat(messages).join("; ");
  input.setAttribute("aria-invalid", "true");
  let msg = input.nextElementSibling && input.nextElementSibling.classList.contains("field-msg") ? input.nextElementSibling : null;
  if (!msg) {
    msg = document.createElement("span");
    msg.className = "field-msg";
    msg.id = `field-msg-${++counter}`;
    msg.setAttribute("role", "alert");
    input.insertAdjacentElement("afterend", msg);
  }
  msg.textContent = `⚠ ${prefix}${text}.`;
  input.setAttribute("aria-describedby", msg.id);
}

export function clearFieldError(input) {
  input.removeAttribute("aria-invalid");
  input.removeAttribute("aria-describedby");
  const msg = input.nextElementSibling;
  if (msg && msg.classList.contains("field-msg")) msg.remove();
}

export function clearAllFieldErrors(root = document) {
  for (const input of root.querySelectorAll("[aria-invalid=true]")) clearFieldError(input);
}

