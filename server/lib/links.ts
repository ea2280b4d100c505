/** Absolute links to pages of the client, for e-mail texts. Set once from the configuration. */
let base = 'http://127.0.0.1:8080';

export function setPublicUrl(url: string): void {
  base = url.replace(/\/+$/, '');
}

export function pageLink(path: string): string {
  return `${base}${path.startsWith('/') ? path : `/${path}`}`;
}
