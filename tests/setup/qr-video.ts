// A fake camera for browser tests: a Y4M video of a QR code on a white sheet, for Chromium's --use-file-for-fake-video-capture.
import QRCode from 'qrcode'

/**
 * A Y4M video (YUV4MPEG2, 4:2:0, full-range "C420jpeg") of a white sheet with the QR code centred on it, as a camera
 * would see a printed ticket held in front of it. Y = 0 black / 255 white, U = V = 128 (no colour).
 * Frame layout after the header: "FRAME\n", then the Y plane (W×H bytes), the U and the V planes (W/2×H/2 each).
 */
export function qrVideo(text: string, o: { width: number; height: number; modulePx: number; frames: number }): Buffer {
  // Same error correction as the printed ticket (server/services/tickets.ts ticketQrPng: level M).
  const qr = QRCode.create(text, { errorCorrectionLevel: 'M' })
  const n = qr.modules.size
  const side = n * o.modulePx
  const x0 = Math.floor((o.width - side) / 2)
  const y0 = Math.floor((o.height - side) / 2)
  const y = Buffer.alloc(o.width * o.height, 255)
  for (let r = 0; r < n; r++) {
    for (let c = 0; c < n; c++) {
      if (!qr.modules.get(r, c)) continue
      for (let dy = 0; dy < o.modulePx; dy++)
        y.fill(0, (y0 + r * o.modulePx + dy) * o.width + x0 + c * o.modulePx, (y0 + r * o.modulePx + dy) * o.width + x0 + (c + 1) * o.modulePx)
    }
  }
  const chroma = Buffer.alloc((o.width / 2) * (o.height / 2), 128)
  const frame = Buffer.concat([Buffer.from('FRAME\n'), y, chroma, chroma])
  const header = Buffer.from(`YUV4MPEG2 W${o.width} H${o.height} F25:1 Ip A1:1 C420jpeg\n`)
  return Buffer.concat([header, ...Array.from({ length: o.frames }, () => frame)])
}
