// Raw binary images: the chip's contents byte for byte from address 0, what a device
// programmer loads without interpretation. Words wider than 8 bits are stored least
// significant byte first (little-endian), word k at byte offset k*bytesPerWord. There is no
// header or checksum, so reading back can only check that the length is whole words.
import {
  assertValidImage,
  failure,
  imageBytes,
  imageFromBytes,
  success,
  type ChipImage,
  type ChipWidth,
  type FormatResult,
} from './image';

/** A fresh copy of the image's bytes (callers may keep or change it freely). */
export function writeBinary(image: ChipImage): Uint8Array {
  assertValidImage(image);
  const bytes = imageBytes(image);
  return bytes === image.words ? bytes.slice() : bytes;
}

export function readBinary(input: Uint8Array, widthBits: ChipWidth): FormatResult<ChipImage> {
  const image = imageFromBytes(input, widthBits);
  if (image === null) {
    return failure('bin', `the file has ${input.length} bytes, which is not a whole number of ${widthBits}-bit words`);
  }
  return success(image);
}
