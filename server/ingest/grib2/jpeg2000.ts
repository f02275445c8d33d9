/**
 * JPEG 2000 code streams (GRIB2 template 5.40) through the OpenJPEG wasm build in
 * @cornerstonejs/codec-openjpeg. The module prints INFO lines through Emscripten's
 * print/printErr hooks; they are routed to nothing so that CLI output stays a contract.
 */
import { createRequire } from 'node:module';
import { IngestError } from '../canonical.ts';

interface FrameInfo {
  width: number;
  height: number;
  bitsPerSample: number;
  componentCount: number;
  isSigned: boolean;
}
interface J2KDecoder {
  getEncodedBuffer(length: number): Uint8Array;
  getDecodedBuffer(): Uint8Array;
  decode(): void;
  getFrameInfo(): FrameInfo;
  delete(): void;
}
interface OpenJpegModule {
  J2KDecoder: new () => J2KDecoder;
}

let modulePromise: Promise<OpenJpegModule> | null = null;

function loadCodec(): Promise<OpenJpegModule> {
  if (!modulePromise) {
    const require = createRequire(import.meta.url);
    const factory = require('@cornerstonejs/codec-openjpeg/decodewasmjs') as (opts: object) => Promise<OpenJpegModule>;
    const silent = () => {};
    modulePromise = factory({ print: silent, printErr: silent });
  }
  return modulePromise;
}

export async function decodeJpeg2000(stream: Uint8Array, where: string): Promise<Float64Array> {
  const codec = await loadCodec();
  const decoder = new codec.J2KDecoder();
  try {
    decoder.getEncodedBuffer(stream.length).set(stream);
    try {
      decoder.decode();
    } catch (err) {
      // an aborted wasm instance is not reusable: load a fresh one for the next field
      modulePromise = null;
      throw new IngestError(where, `JPEG 2000 code stream does not decode (${err instanceof Error ? err.message : String(err)})`);
    }
    const info = decoder.getFrameInfo();
    if (info.componentCount !== 1) throw new IngestError(where, `JPEG 2000 image has ${info.componentCount} components, GRIB2 uses 1`);
    const bytes = decoder.getDecodedBuffer();
    const n = info.width * info.height;
    const out = new Float64Array(n);
    const src = bytes.byteOffset;
    if (info.bitsPerSample <= 8) {
      for (let i = 0; i < n; i++) out[i] = bytes[i];
    } else if (info.bitsPerSample <= 16) {
      // the decoder hands back host-order (little-endian) 16-bit samples
      if (bytes.length < 2 * n) throw new IngestError(where, 'JPEG 2000 decoder returned fewer samples than the image size');
      const view = new DataView(bytes.buffer, src, 2 * n);
      for (let i = 0; i < n; i++) out[i] = info.isSigned ? view.getInt16(2 * i, true) : view.getUint16(2 * i, true);
    } else {
      throw new IngestError(where, `JPEG 2000 images with ${info.bitsPerSample} bits per sample are not supported (at most 16)`);
    }
    return out;
  } finally {
    decoder.delete();
  }
}
