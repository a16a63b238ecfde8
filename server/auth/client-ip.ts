import type { RequestHandler } from "express";

/**
 * better-auth keys its rate limits by client address, read from a request header. Node's socket
 * address is not visible to it, so this middleware, mounted in front of the auth handler, writes
 * the address Express resolved (`req.ip`: the socket address, or X-Forwarded-For only when the
 * request comes from a trusted loopback proxy — app.ts sets `trust proxy` to "loopback") into a
 * header of our own, replacing whatever a client sent in it.
 */
export const CLIENT_IP_HEADER = "x-burnline-client-ip";

export function normaliseIp(ip: string | undefined): string {
  if (!ip) return "0.0.0.0";
  return ip.startsWith("::ffff:") && ip.includes(".") ? ip.slice(7) : ip;
}

export const clientIpHeader: RequestHandler = (req, _res, next) => {
  req.headers[CLIENT_IP_HEADER] = normaliseIp(req.ip ?? req.socket.remoteAddress);
  next();
};
