/**
 * What the decoder needs to know of a structure's configuration: which loggers and channels exist.
 * Built from the compiled configuration; kept as a small interface so decoding stays testable alone.
 */
export interface ChannelDirectory {
  structureId: string;
  hasLogger(loggerId: string): boolean;
  hasChannel(loggerId: string, channelId: string): boolean;
}
