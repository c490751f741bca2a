// Starts Swagger UI or ReDoc on the API docs page (kept out of the page: the CSP allows no inline script).
"use strict";
(function () {
  const el = document.getElementById("api-docs");
  const url = el.dataset.schema;
  if (el.dataset.ui === "swagger") {
    window.ui = SwaggerUIBundle({ url, dom_id: "#api-docs", deepLinking: true, layout: "BaseLayout",
                                  presets: [SwaggerUIBundle.presets.apis] });
  } else {
    Redoc.init(url, {}, el);
  }
})();
