// Renders /api/v1/openapi.json. A file of its own because the app's CSP allows no inline script.
window.addEventListener('DOMContentLoaded', function () {
  window.ui = window.SwaggerUIBundle({
    url: '/api/v1/openapi.json',
    dom_id: '#api-reference',
    deepLinking: true,
    docExpansion: 'list',
    defaultModelsExpandDepth: 0,
    // same-origin requests carry the session cookie, so "Try it out" works once signed in
    withCredentials: true,
    presets: [window.SwaggerUIBundle.presets.apis],
    layout: 'BaseLayout',
  });
});
