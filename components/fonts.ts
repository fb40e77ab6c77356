/** Loads the fonts shipped with the app (no network): Inter 400/600 and IBM Plex Mono 400/500. */
import { FontDisplay, useFonts } from 'expo-font';
import { Inter_400Regular } from '@expo-google-fonts/inter/400Regular';
import { Inter_600SemiBold } from '@expo-google-fonts/inter/600SemiBold';
import { IBMPlexMono_400Regular } from '@expo-google-fonts/ibm-plex-mono/400Regular';
import { IBMPlexMono_500Medium } from '@expo-google-fonts/ibm-plex-mono/500Medium';

/** `swap` on web: text shows at once in the fallback face and takes the shipped face when it arrives (no invisible text). */
const swap = (uri: number | string) => ({ uri, display: FontDisplay.SWAP });

/** Returns [loaded, error]. Screens do not wait for it: they render at once and the faces swap in. */
export function useKeelsonFonts(): [boolean, Error | null] {
  return useFonts({
    Inter_400Regular: swap(Inter_400Regular),
    Inter_600SemiBold: swap(Inter_600SemiBold),
    IBMPlexMono_400Regular: swap(IBMPlexMono_400Regular),
    IBMPlexMono_500Medium: swap(IBMPlexMono_500Medium),
  });
}
