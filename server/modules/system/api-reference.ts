/**
 * The API reference page: the OpenAPI document (GET /api/openapi.json) shown with swagger-ui-dist,
 * shipped in node_modules and served from the app itself (no download at run time, no CDN). The
 * page and its start script are our own files (the Content-Security-Policy allows scripts from
 * this origin only); the viewer's bundle and style sheet are served from the package.
 */
import { createRequire } from 'node:module';
import path from 'node:path';
import { Router } from 'express';

const PAGE = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>Drumline API reference</title>
<link rel="stylesheet" href="./swagger-ui.css">
</head>
<body>
<p style="font-family: sans-serif; margin: 12px 20px">Drumline API reference. Routes for people take the session of a signed-in user;
machine routes (ERP, LIMS) take "Authorization: Bearer dl_..." and answer only within the token's scopes.</p>
<div id="reference"></div>
<script src="./swagger-ui-bundle.js"></script>
<script src="./start.js"></script>
</body>
</html>`;

const START = `window.addEventListener('load', function () {
  window.ui = SwaggerUIBundle({ url: '/api/openapi.json', dom_id: '#reference', deepLinking: true, supportedSubmitMethods: [] });
});`;

export function apiReferenceRoutes(): Router {
  const dist = path.dirname(createRequire(import.meta.url).resolve('swagger-ui-dist/package.json'));
  const r = Router();
  r.get('/api-reference', (req, res, next) => (req.path.endsWith('/') ? next() : res.redirect(301, '/api-reference/')));
  r.get('/api-reference/', (_req, res) => {
    res.type('html').send(PAGE);
  });
  r.get('/api-reference/start.js', (_req, res) => {
    res.type('application/javascript').send(START);
  });
  for (const f of ['swagger-ui-bundle.js', 'swagger-ui.css'])
    r.get(`/api-reference/${f}`, (_req, res) => res.sendFile(path.join(dist, f), { maxAge: '1h' }));
  return r;
}
