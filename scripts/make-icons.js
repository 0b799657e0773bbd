#!/usr/bin/env node
/**
 * Draws Oddsmith's icons (assets/icon-16.png, -32, -64, -80): a teal rounded square with a white
 * sigmoid curve rising from bottom left to top right, an amber dot below the curve and a white dot
 * above it (two classes either side of the boundary). Our own design, drawn from geometry with 4x4
 * supersampling; written as RGBA PNGs with node's zlib, no dependencies.
 *
 * Run: node scripts/make-icons.js   (rewrites the files in assets/)
 */
/* eslint-env node */
const fs = require("fs");
const path = require("path");
const zlib = require("zlib");

const SIZES = [16, 32, 64, 80];
const TEAL = [46, 125, 107];
const WHITE = [255, 255, 255];
const AMBER = [242, 169, 59];
const SUPERSAMPLE = 4;

// ---- PNG writing (RFC 2083: signature, IHDR, IDAT of filtered scanlines, IEND) ---------------------
const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

function crc32(buf) {
  let c = 0xffffffff;
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type, data) {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const body = Buffer.concat([Buffer.from(type, "ascii"), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(body));
  return Buffer.concat([len, body, crc]);
}

/** Encode RGBA pixels (Uint8Array, width*height*4) as a PNG file. */
function encodePng(width, height, rgba) {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 6; // colour type RGBA
  const raw = Buffer.alloc(height * (width * 4 + 1));
  for (let y = 0; y < height; y++) {
    raw[y * (width * 4 + 1)] = 0; // filter: none
    Buffer.from(rgba.buffer, y * width * 4, width * 4).copy(raw, y * (width * 4 + 1) + 1);
  }
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk("IHDR", ihdr),
    chunk("IDAT", zlib.deflateSync(raw, { level: 9 })),
    chunk("IEND", Buffer.alloc(0)),
  ]);
}

// ---- geometry in unit coordinates (0..1, y down) ----------------------------------------------------
const CURVE = [];
for (let k = 0; k <= 400; k++) {
  const x = 0.14 + (0.72 * k) / 400;
  const y = 0.5 + 0.3 * -Math.tanh((x - 0.5) * 7); // rising sigmoid (y down, so negated)
  CURVE.push([x, y]);
}

function insideRoundedSquare(x, y, radius) {
  const cx = Math.min(Math.max(x, radius), 1 - radius);
  const cy = Math.min(Math.max(y, radius), 1 - radius);
  return (x - cx) ** 2 + (y - cy) ** 2 <= radius * radius && x >= 0 && x <= 1 && y >= 0 && y <= 1;
}

function distanceToCurve(x, y) {
  let best = Infinity;
  for (const [cx, cy] of CURVE) best = Math.min(best, (x - cx) ** 2 + (y - cy) ** 2);
  return Math.sqrt(best);
}

/** Colour (RGBA) of the point (x, y) of an icon `size` pixels wide. */
function shade(x, y, size) {
  if (!insideRoundedSquare(x, y, 0.2)) return null;
  const stroke = Math.max(0.075, 1.6 / size); // at least ~1.6 px so the 16 px icon keeps its curve
  if (distanceToCurve(x, y) <= stroke / 2) return WHITE;
  const dot = Math.max(0.085, 1.8 / size);
  if ((x - 0.74) ** 2 + (y - 0.78) ** 2 <= dot * dot) return AMBER; // below the curve, right
  if ((x - 0.26) ** 2 + (y - 0.22) ** 2 <= dot * dot) return WHITE; // above the curve, left
  return TEAL;
}

function drawIcon(size) {
  const rgba = new Uint8Array(size * size * 4);
  const n = SUPERSAMPLE;
  for (let py = 0; py < size; py++) {
    for (let px = 0; px < size; px++) {
      let r = 0, g = 0, b = 0, a = 0;
      for (let sy = 0; sy < n; sy++) {
        for (let sx = 0; sx < n; sx++) {
          const c = shade((px + (sx + 0.5) / n) / size, (py + (sy + 0.5) / n) / size, size);
          if (!c) continue;
          r += c[0];
          g += c[1];
          b += c[2];
          a += 1;
        }
      }
      const o = (py * size + px) * 4;
      if (a > 0) {
        rgba[o] = Math.round(r / a);
        rgba[o + 1] = Math.round(g / a);
        rgba[o + 2] = Math.round(b / a);
        rgba[o + 3] = Math.round((255 * a) / (n * n));
      }
    }
  }
  return encodePng(size, size, rgba);
}

if (require.main === module) {
  const dir = path.resolve(__dirname, "..", "assets");
  fs.mkdirSync(dir, { recursive: true });
  for (const size of SIZES) {
    const file = path.join(dir, `icon-${size}.png`);
    fs.writeFileSync(file, drawIcon(size));
    console.log(`wrote ${path.relative(process.cwd(), file)}`);
  }
}

module.exports = { drawIcon, encodePng, SIZES };
