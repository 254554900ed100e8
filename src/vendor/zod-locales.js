// The app bundle's stand-in for zod's locale index: English only. zod registers English itself (classic/schemas.js);
// the index of every other language roughly doubled zod's share of the payload. metro.config.js points zod's
// "../locales/index.js" imports here. The server and CLI use zod unchanged.
export { default as en } from 'zod/v4/locales/en.js';
