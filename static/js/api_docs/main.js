// Starts Swagger UI or ReDoc on the API docs page (kept out of the page: the CSP allows no inline script).
// SwaggerUIBundle and Redoc are the vendored bundles' own globals (classic scripts loaded before this module).
const el = document.getElementById("api-docs");
const url = el.dataset.schema;
if (el.dataset.ui === "swagger") {
  const { SwaggerUIBundle } = window;
  SwaggerUIBundle({ url, dom_id: "#api-docs", deepLinking: true, layout: "BaseLayout",
                    presets: [SwaggerUIBundle.presets.apis] });
} else {
  window.Redoc.init(url, {}, el);
}
