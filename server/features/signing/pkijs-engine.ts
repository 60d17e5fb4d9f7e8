import { webcrypto } from 'node:crypto';
import * as pkijs from 'pkijs';

/**
 * The pkijs crypto engine on Node's WebCrypto, passed explicitly to pkijs calls so that no
 * process-wide engine has to be set (pkijs `setEngine` is global state).
 *
 * Reference: PKI.js README, "Node.js" (github.com/PeculiarVentures/PKI.js).
 */
export const pkijsEngine = new pkijs.CryptoEngine({ name: 'node', crypto: webcrypto as unknown as Crypto });

export const toArrayBuffer = (bytes: Uint8Array): ArrayBuffer =>
  bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
