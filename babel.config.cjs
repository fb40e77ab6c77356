/** Babel for the Expo web export (and native builds): the stock Expo preset. */
module.exports = function (api) {
  api.cache(true);
  return { presets: ['babel-preset-expo'] };
};
