/**
 * What the decoder needs to know of a structure's configuration: which loggers and channels exist.
 * Built from the compiled configuration; kept as a small interface so decoding stays testable alone.
 * Its answers never change for one object (another configuration is another directory): the
 * decoder remembers that a logger's usual channels are all known.
 */
export interface ChannelDirectory {
  structureId: string;
  hasLogger(loggerId: string): boolean;
  hasChannel(loggerId: string, channelId: string): boolean;
}
